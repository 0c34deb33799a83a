package survey

import (
	"strings"
	"testing"

	"morsel/corpus"
	"morsel/report/internal/reporttest"
)

// A row read back from its partial encoding equals the row Weigh gave,
// ratios and all.
func TestWeightRoundTrip(t *testing.T) {
	enc := reporttest.Encoder(t)
	for i, text := range []string{"a", "The harbor crane lifts the ledger.", strings.Repeat("quay tide ", 500), "\xff\xfe bad bytes", "<|endoftext|> special"} {
		d := &corpus.Document{Source: "notes/\xffa.jsonl", Record: i + 1, Line: 3 * i, Format: corpus.FormatJSONL, Text: []byte(text), Hash: uint64(i) * 77}
		w, err := Weigh(enc, d)
		if err != nil {
			t.Fatal(err)
		}
		got, err := DecodeWeight(d, AppendWeight(nil, w))
		if err != nil {
			t.Fatal(err)
		}
		if got != w {
			t.Errorf("%q: read back %+v, want %+v", text, got, w)
		}
	}
	d := &corpus.Document{Source: "a"}
	for _, bad := range [][]byte{nil, {1, 2, 3}, {1, 2, 3, 4, 5, 6}, {0x80}} {
		if _, err := DecodeWeight(d, bad); err == nil {
			t.Errorf("%v: read as a row", bad)
		}
	}
}
