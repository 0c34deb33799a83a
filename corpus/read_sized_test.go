package corpus

import (
	"bytes"
	"io"
	"testing"
	"testing/iotest"
)

// readSized gives exactly what io.ReadAll gives, whether the size it is
// told is right, too small (the file grew) or too large (it shrank).
func TestReadSized(t *testing.T) {
	data := bytes.Repeat([]byte("tide table "), 500)
	for _, size := range []int64{0, 1, 100, int64(len(data)) - 1, int64(len(data)), int64(len(data)) + 50, -1} {
		got, err := readSized(iotest.HalfReader(bytes.NewReader(data)), size)
		if err != nil || !bytes.Equal(got, data) {
			t.Fatalf("size %d: %d bytes, %v", size, len(got), err)
		}
	}
	_, err := readSized(iotest.TimeoutReader(bytes.NewReader(data)), 10)
	if err == nil || err == io.EOF {
		t.Fatalf("a read error was lost: %v", err)
	}
}
