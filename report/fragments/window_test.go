package fragments

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"testing"
	"testing/iotest"

	"morsel/bpe"
	"morsel/corpus"
	"morsel/report/internal/reporttest"
	"morsel/report/render"
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
	t.Run("gpt2", func(t *testing.T) { checkWindowsGiveWhole(t, reporttest.Encoder(t)) })
	// A bundle whose texts may be cut (bpe.Encoder.FreeCuts) is scanned in
	// windows too, cut at its own places.
	t.Run("qwen3", func(t *testing.T) {
		enc := reporttest.BundleEncoder(t, "qwen3")
		if !enc.FreeCuts() {
			t.Fatal("qwen3 has no free cuts: the windows would not be tested")
		}
		checkWindowsGiveWhole(t, enc)
	})
}

func checkWindowsGiveWhole(t *testing.T, enc *bpe.Encoder) {
	text := windowText(t)
	defer func(w int) { scanWindow = w }(scanWindow)
	scanWindow = 4 << 10
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

// TestScanInPartsKeepsDocumentCounts scans large documents that share
// their words, two at once and each flushed in many parts, beside short
// ones, and wants the report of the same documents each scanned whole and
// flushed once: a word met in many parts of one document still counts
// that document once.
func TestScanInPartsKeepsDocumentCounts(t *testing.T) {
	defer func(w int, p int64) { scanWindow, partLimit = w, p }(scanWindow, partLimit)
	scanWindow = 4 << 10
	text := windowText(t)
	for i := 0; i < 4000; i++ {
		text = fmt.Appendf(text, " qz%dv", i%700) // words that come back in later parts
	}
	enc := reporttest.Encoder(t)
	run := func(parts int64) []byte {
		partLimit = parts
		fr := NewFragmenter(enc, nil)
		var wg sync.WaitGroup
		dws := make([]*DocWords, 4)
		for d := range dws {
			wg.Add(1)
			go func() {
				defer wg.Done()
				var err error
				if d%2 == 0 {
					dws[d], err = fr.Scan(&corpus.Document{Source: "big.txt", Stream: io.NopCloser(bytes.NewReader(text))})
				} else {
					dws[d], err = fr.ScanText([]byte("a short qz5v note"))
				}
				if err != nil {
					t.Error(err)
				}
			}()
		}
		wg.Wait()
		for d, dw := range dws {
			fr.AddWords("doc.txt", d+1, dw)
		}
		b, err := json.Marshal(fr.Finish(Options{MinPieces: 1, MinCount: 1}, nil))
		if err != nil {
			t.Fatal(err)
		}
		return b
	}
	whole, parts := run(1<<40), run(1)
	if !bytes.Equal(whole, parts) {
		t.Fatalf("the report of documents flushed in parts differs from the whole documents' (%d and %d bytes of JSON)", len(parts), len(whole))
	}
	if !bytes.Contains(whole, []byte(`"word":"qz5v","script":"Latin","count":14,"documents":4`)) {
		t.Fatalf("qz5v is not counted in 4 documents: %.300s", whole[bytes.Index(whole, []byte("qz5v"))-10:])
	}
}

// TestScanFailingInPartsSaysSo reads a large stream that fails after some
// of its parts were flushed, and wants the report to say how many of its
// words stay counted.
func TestScanFailingInPartsSaysSo(t *testing.T) {
	defer func(w int, p int64) { scanWindow, partLimit = w, p }(scanWindow, partLimit)
	scanWindow, partLimit = 4<<10, 1
	text := windowText(t)[:40<<10]
	fr := NewFragmenter(reporttest.Encoder(t), nil)
	r := io.MultiReader(bytes.NewReader(text), iotest.ErrReader(io.ErrUnexpectedEOF))
	if _, err := fr.Scan(&corpus.Document{Source: "cut.txt", Stream: io.NopCloser(r)}); err == nil {
		t.Fatal("a stream that fails read as whole")
	}
	rep := fr.Finish(Options{MinPieces: 1, MinCount: 1}, nil)
	var counted int64
	for _, w := range rep.Words {
		counted += w.Count
	}
	if rep.Totals.FailedWords == 0 || rep.Totals.FailedWords > counted {
		t.Fatalf("failed_document_words %d, with %d occurrences listed", rep.Totals.FailedWords, counted)
	}
	var out bytes.Buffer
	if err := Write(&out, render.Table, rep, 10); err != nil || !strings.Contains(out.String(), "failed part way") {
		t.Fatalf("the table does not say the words of a failed document stay counted (%v):\n%s", err, out.String())
	}
}
