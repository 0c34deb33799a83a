package bpe

import "testing"

// BenchmarkBundleCount counts the golden corpus's prose, code and CJK
// texts under the bundles of the survey benchmark (scripts/bench-bundle.sh),
// warm, on one core: the pipeline's cost per byte without the walk.
// cjk-sequence-regexp2 is the CJK chain run by regexp2 instead of the hand
// scanners.
func BenchmarkBundleCount(b *testing.B) {
	qwen3, _ := loadTestBundle(b, "qwen3")
	metaspace, _ := loadTestBundle(b, "metaspace-32k")
	vocabs := []struct {
		name string
		v    *Vocab
	}{{"qwen3", qwen3}, {"cjk-sequence", sequenceBundle(b, false)}, {"cjk-sequence-regexp2", sequenceBundle(b, true)}, {"metaspace-32k", metaspace}}
	texts := []struct {
		name  string
		files []string
	}{{"prose", proseFiles}, {"code", codeFiles}, {"cjk", cjkFiles}}
	for _, v := range vocabs {
		e, err := NewEncoder(v.v, Options{})
		if err != nil {
			b.Fatal(err)
		}
		for _, tx := range texts {
			text := benchText(b, tx.files...)
			b.Run(v.name+"/"+tx.name, func(b *testing.B) {
				b.SetBytes(int64(len(text)))
				b.ReportAllocs()
				for i := 0; i < b.N; i++ {
					e.Count(text)
				}
			})
		}
	}
}
