package corpus

import (
	"bytes"
	"fmt"
	"math/rand/v2"
	"strings"
	"testing"
)

// jsonlRecords returns n JSON Lines records of 20 invented words each,
// with an id and a tag beside the text, as batch exports tend to have.
func jsonlRecords(n int) []byte {
	words := strings.Fields("lantern keeper wick tide harbour rope crate ledger beacon gull " +
		"shoal ferry dusk mast anchor chart compass signal pier lamp")
	rng := rand.New(rand.NewPCG(1, 2))
	var b bytes.Buffer
	for i := range n {
		fmt.Fprintf(&b, `{"id": %d, "tag": "log", "text": "`, i)
		for w := range 20 {
			if w > 0 {
				b.WriteByte(' ')
			}
			b.WriteString(words[rng.IntN(len(words))])
		}
		b.WriteString("\"}\n")
	}
	return b.Bytes()
}

// BenchmarkJSONL reads 100,000 records; ns/op divided by 100,000 is the
// corpus's cost per record.
func BenchmarkJSONL(b *testing.B) {
	data := jsonlRecords(100_000)
	b.SetBytes(int64(len(data)))
	b.ReportAllocs()
	for b.Loop() {
		n := 0
		opt := Options{Stdin: bytes.NewReader(data), Format: FormatJSONL}
		if err := Read(Input{Path: "-", Size: -1}, opt, func(it Item) error {
			if it.Doc != nil {
				n++
			}
			return nil
		}); err != nil || n != 100_000 {
			b.Fatalf("read %d records: %v", n, err)
		}
	}
}
