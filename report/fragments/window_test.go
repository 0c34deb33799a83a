package fragments

import (
	"bytes"
	"encoding/json"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"testing/iotest"

	"morsel/corpus"
	"morsel/report/internal/reporttest"
)

// windowText is the demo's documents joined, in many scripts and with
// numbers, code, markup and apostrophes, and with a long run of white
// space and a word longer than a window: what a scan in windows must read
// as the whole text is read.
func windowText(t *testing.T) []byte {
	t.Helper()
	paths, err := filepath.Glob("../../testdata/demo/docs/*")
	if err != nil || len(paths) == 0 {
		t.Fatalf("demo documents: %v", err)
	}
	var all []byte
	for _, p := range paths {
		b, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		all = append(all, b...)
	}
	all = append(all, strings.Repeat(" \t\n", 5000)...)
	all = append(all, strings.Repeat("Grüße", 3000)...)
	return append(all, " don't 3.5 3's 👩‍🔬 end"...)
}

// TestScanInWindowsGivesTheWholeTextsReport scans one text whole and,
// as a stream, in windows far smaller than it, and wants the same
// document figures and the same report (words, counts, documents, splits).
func TestScanInWindowsGivesTheWholeTextsReport(t *testing.T) {
	text := windowText(t)
	defer func(w int) { scanWindow = w }(scanWindow)
	scanWindow = 4 << 10
	enc := reporttest.Encoder(t)
	run := func(stream bool) ([]byte, *DocWords) {
		fr := NewFragmenter(enc, nil)
		var last *DocWords
		for rec := 1; rec <= 2; rec++ { // twice, so that document counts are checked too
			var dw *DocWords
			var err error
			if stream {
				dw, err = fr.Scan(&corpus.Document{Source: "big.txt", Stream: io.NopCloser(iotest.HalfReader(bytes.NewReader(text)))})
			} else {
				dw, err = fr.ScanText(text)
			}
			if err != nil {
				t.Fatal(err)
			}
			fr.AddWords("big.txt", rec, dw)
			last = dw
		}
		r := fr.Finish(Options{MinPieces: 1, MinCount: 1}, nil)
		b, err := json.Marshal(r)
		if err != nil {
			t.Fatal(err)
		}
		return b, last
	}
	whole, wdw := run(false)
	windows, sdw := run(true)
	if wdw.Bytes != len(text) || sdw.Bytes != wdw.Bytes || sdw.Tokens != wdw.Tokens || sdw.All != wdw.All || sdw.ByScript != wdw.ByScript {
		t.Fatalf("document figures in windows %+v, whole %+v (%d bytes)", sdw.All, wdw.All, len(text))
	}
	if !bytes.Equal(whole, windows) {
		t.Fatalf("the report of the text in windows differs from the whole text's (%d and %d bytes of JSON)", len(windows), len(whole))
	}
}

// TestScanFailingStreamTalliesNothing reads a stream that fails after
// several windows, and wants none of its words in the report.
func TestScanFailingStreamTalliesNothing(t *testing.T) {
	defer func(w int) { scanWindow = w }(scanWindow)
	scanWindow = 4 << 10
	text := windowText(t)[:40<<10]
	fr := NewFragmenter(reporttest.Encoder(t), nil)
	r := io.MultiReader(bytes.NewReader(text), iotest.ErrReader(io.ErrUnexpectedEOF))
	if _, err := fr.Scan(&corpus.Document{Source: "cut.txt", Stream: io.NopCloser(r)}); err == nil {
		t.Fatal("a stream that fails read as whole")
	}
	if rep := fr.Finish(Options{MinPieces: 1, MinCount: 1}, nil); rep.Totals.DistinctWords != 0 || len(rep.Words) != 0 {
		t.Fatalf("%d distinct words tallied from a document that failed", rep.Totals.DistinctWords)
	}
}
