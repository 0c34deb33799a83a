package textfile

import (
	"errors"
	"os"
	"path/filepath"
	"syscall"
	"testing"
	"time"
)

func TestReadSmall(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "frame.txt")
	if err := os.WriteFile(p, []byte("0123456789"), 0o644); err != nil {
		t.Fatal(err)
	}
	if b, err := ReadSmall(p, 10); err != nil || string(b) != "0123456789" {
		t.Fatalf("at the limit: %q, %v", b, err)
	}
	if _, err := ReadSmall(p, 9); !errors.Is(err, ErrTooLarge) {
		t.Fatalf("over the limit: %v", err)
	}
	if _, err := ReadSmall(dir, 10); !errors.Is(err, ErrNotRegular) {
		t.Fatalf("directory: %v", err)
	}
	if _, err := ReadSmall("/dev/zero", 10); !errors.Is(err, ErrNotRegular) {
		t.Fatalf("/dev/zero: %v", err)
	}
	// A named pipe with no writer: refused at once, not waited on.
	fifo := filepath.Join(dir, "pipe")
	if err := syscall.Mkfifo(fifo, 0o644); err != nil {
		t.Skip("no named pipes:", err)
	}
	done := make(chan error, 1)
	go func() { _, err := ReadSmall(fifo, 10); done <- err }()
	select {
	case err := <-done:
		if !errors.Is(err, ErrNotRegular) {
			t.Fatalf("named pipe: %v", err)
		}
	case <-time.After(10 * time.Second):
		t.Fatal("ReadSmall blocked on a named pipe")
	}
}
