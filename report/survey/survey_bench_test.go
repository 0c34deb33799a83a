package survey

import (
	"testing"

	"morsel/corpus"
	"morsel/report/internal/reporttest"
)

// BenchmarkSurveyWeigh is what survey spends on a document; compare it
// with BenchmarkFragmentsScan on the same text (the bound is 2x).
func BenchmarkSurveyWeigh(b *testing.B) {
	text, enc := reporttest.BenchText(b), reporttest.Encoder(b)
	enc.Count(text) // warm the word cache, as a long run does
	b.SetBytes(int64(len(text)))
	b.ReportAllocs()
	for b.Loop() {
		if _, err := Weigh(enc, &corpus.Document{Text: text}); err != nil {
			b.Fatal(err)
		}
	}
}
