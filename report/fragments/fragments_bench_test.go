package fragments

import (
	"testing"
	"time"

	"morsel/report/survey"

	"morsel/corpus"
	"morsel/report/internal/reporttest"
)

// BenchmarkFragmentsScan is what fragments spends on a document: encoding,
// word boundaries, pieces, and folding the words into the report.
func BenchmarkFragmentsScan(b *testing.B) {
	text, enc := reporttest.BenchText(b), reporttest.Encoder(b)
	enc.Count(text)
	f := NewFragmenter(enc, nil)
	b.SetBytes(int64(len(text)))
	b.ReportAllocs()
	for b.Loop() {
		dw, err := f.ScanText(text)
		if err != nil {
			b.Fatal(err)
		}
		f.AddWords("bench", 0, dw)
	}
}

// BenchmarkFragmentsVsSurvey times survey's weighing and fragments' scan of
// the same text in turns, within each iteration, so that other load on the
// machine falls on both alike, and reports fragments' time over survey's
// as "ratio". One text of 200 kB, read again and again, keeps every table
// in the processor's cache and the encoder's word cache warm, which makes
// the encoding, shared by both, cheap: the ratio comes out higher here
// (about 2.1 on the project's machine) than for whole runs over a corpus,
// where the bound of 2 is measured (scripts/bench-fragments.sh).
func BenchmarkFragmentsVsSurvey(b *testing.B) {
	text, enc := reporttest.BenchText(b), reporttest.Encoder(b)
	enc.Count(text)
	f := NewFragmenter(enc, nil)
	var weigh, frag time.Duration
	b.SetBytes(int64(len(text)))
	for b.Loop() {
		t0 := time.Now()
		if _, err := survey.Weigh(enc, &corpus.Document{Text: text}); err != nil {
			b.Fatal(err)
		}
		t1 := time.Now()
		dw, err := f.ScanText(text)
		if err != nil {
			b.Fatal(err)
		}
		f.AddWords("bench", 0, dw)
		t2 := time.Now()
		weigh += t1.Sub(t0)
		frag += t2.Sub(t1)
	}
	b.ReportMetric(float64(frag)/float64(weigh), "ratio")
}
