package bpe

import (
	"bytes"
	"encoding/json"
	"errors"
	"os"
	"testing"
)

// Written out, the embedded GPT-2 vocabulary gives back the published
// merges file byte for byte (bpe/gpt2/merges.txt, whose sha256 gpt2/SOURCE.md
// gives as the one published for the original release) and the published
// token -> id map.
func TestWritePairGPT2(t *testing.T) {
	var vj, mt bytes.Buffer
	if err := WritePair(&vj, &mt, Default()); err != nil {
		t.Fatal(err)
	}
	published, err := os.ReadFile("gpt2/merges.txt")
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(mt.Bytes(), published) {
		t.Fatal("the merges written differ from gpt2/merges.txt")
	}
	pubVocab, err := os.ReadFile("gpt2/vocab.json")
	if err != nil {
		t.Fatal(err)
	}
	var want, got map[string]int
	if err := json.Unmarshal(pubVocab, &want); err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(vj.Bytes(), &got); err != nil {
		t.Fatalf("the vocabulary written is not JSON: %v", err)
	}
	if len(got) != len(want) {
		t.Fatalf("%d tokens written, %d published", len(got), len(want))
	}
	for k, id := range want {
		if got[k] != id {
			t.Fatalf("token %q: id %d written, %d published", k, got[k], id)
		}
	}
}

// learnedDemo extends GPT-2 with merges learned from the demo corpus.
func learnedDemo(t *testing.T, k int) *Learned {
	t.Helper()
	got, err := Learn(countText(gpt2(t, Options{}), demoTexts(t)...), LearnOptions{Merges: k})
	if err != nil {
		t.Fatal(err)
	}
	return got
}

// sameVocab checks that two vocabularies have the same tokens, merges and
// specials.
func sameVocab(t *testing.T, got, want *Vocab) {
	t.Helper()
	if got.Size() != want.Size() {
		t.Fatalf("%d tokens, want %d", got.Size(), want.Size())
	}
	for id := range want.tokens {
		if !bytes.Equal(got.tokens[id], want.tokens[id]) {
			t.Fatalf("token %d: %q, want %q", id, got.tokens[id], want.tokens[id])
		}
	}
	gm, wm := got.Merges(), want.Merges()
	if len(gm) != len(wm) {
		t.Fatalf("%d merges, want %d", len(gm), len(wm))
	}
	for r := range wm {
		if gm[r] != wm[r] {
			t.Fatalf("merge %d: %v, want %v", r, gm[r], wm[r])
		}
	}
	gs, ws := got.Specials(), want.Specials()
	if len(gs) != len(ws) {
		t.Fatalf("specials %v, want %v", gs, ws)
	}
	for i := range ws {
		if gs[i] != ws[i] {
			t.Fatalf("specials %v, want %v", gs, ws)
		}
	}
}

func TestWritePairRoundTrip(t *testing.T) {
	for _, l := range []*Learned{learnedDemo(t, 200), learnFresh(t, 300)} {
		var vj, mt bytes.Buffer
		if err := WritePair(&vj, &mt, l.Vocab); err != nil {
			t.Fatal(err)
		}
		back, err := Parse("vocab.json", vj.Bytes(), "merges.txt", mt.Bytes())
		if err != nil {
			t.Fatal(err)
		}
		sameVocab(t, back, l.Vocab)
	}
}

// learnFresh learns a vocabulary from bytes on the demo corpus.
func learnFresh(t *testing.T, k int) *Learned {
	t.Helper()
	got, err := Learn(countText(byteEncoder(t, ""), demoTexts(t)...), LearnOptions{Merges: k})
	if err != nil {
		t.Fatal(err)
	}
	return got
}

// The bundle holds the same vocabulary and merges as the pair, in the
// layout of the tokenizers library's tokenizer.json (model type BPE, the
// vocab as token -> id, merges as pairs, specials as added tokens).
func TestWriteBundleMatchesPair(t *testing.T) {
	l := learnedDemo(t, 200)
	for _, pattern := range []string{"", `\S+|\s+`} {
		var b bytes.Buffer
		if err := WriteBundle(&b, l.Vocab, pattern); err != nil {
			t.Fatal(err)
		}
		var doc struct {
			AddedTokens []struct {
				ID      int    `json:"id"`
				Content string `json:"content"`
				Special bool   `json:"special"`
			} `json:"added_tokens"`
			PreTokenizer map[string]any `json:"pre_tokenizer"`
			Model        struct {
				Type   string         `json:"type"`
				Vocab  map[string]int `json:"vocab"`
				Merges [][2]string    `json:"merges"`
			} `json:"model"`
		}
		if err := json.Unmarshal(b.Bytes(), &doc); err != nil {
			t.Fatalf("the bundle is not JSON: %v", err)
		}
		if doc.Model.Type != "BPE" || len(doc.Model.Vocab) != l.Vocab.Size() || len(doc.Model.Merges) != l.Vocab.Info().Merges {
			t.Fatalf("model %s with %d tokens and %d merges", doc.Model.Type, len(doc.Model.Vocab), len(doc.Model.Merges))
		}
		if len(doc.AddedTokens) != 1 || doc.AddedTokens[0].Content != "<|endoftext|>" || doc.AddedTokens[0].ID != 50256 || !doc.AddedTokens[0].Special {
			t.Fatalf("added tokens %+v", doc.AddedTokens)
		}
		// Rebuild a pair from the bundle and hold it to the vocabulary.
		var vj bytes.Buffer
		vjs, _ := json.Marshal(doc.Model.Vocab)
		vj.Write(vjs)
		var mt bytes.Buffer
		for _, m := range doc.Model.Merges {
			mt.WriteString(m[0] + " " + m[1] + "\n")
		}
		back, err := Parse("tokenizer.json", vj.Bytes(), "tokenizer.json", mt.Bytes())
		if err != nil {
			t.Fatal(err)
		}
		sameVocab(t, back, l.Vocab)
		typ := doc.PreTokenizer["type"]
		if (pattern == "" && typ != "ByteLevel") || (pattern != "" && typ != "Sequence") {
			t.Fatalf("pattern %q: pre-tokenizer %v", pattern, doc.PreTokenizer)
		}
	}
}

type failWriter struct{}

func (failWriter) Write([]byte) (int, error) { return 0, errors.New("disk full") }

func TestWriteErrors(t *testing.T) {
	v := learnedDemo(t, 10).Vocab
	if err := WritePair(failWriter{}, &bytes.Buffer{}, v); err == nil {
		t.Fatal("a failing vocabulary writer was not reported")
	}
	if err := WritePair(&bytes.Buffer{}, failWriter{}, v); err == nil {
		t.Fatal("a failing merges writer was not reported")
	}
	if err := WriteBundle(failWriter{}, v, ""); err == nil {
		t.Fatal("a failing bundle writer was not reported")
	}
}

// A written bundle loads through the bundle loader and counts every text
// as the written pair does, with the GPT-2 rule and with a split pattern
// of its own.
func TestWriteBundleLoads(t *testing.T) {
	l := learnedDemo(t, 200)
	texts := append(demoTexts(t), goldenTexts(t)...)
	for _, pattern := range []string{"", `\S+|\s+`, `(?i:'s|'t)|[^\r\n\p{L}\p{N}]?\p{L}+|\p{N}{1,3}| ?[^\s\p{L}\p{N}]+[\r\n]*|\s*[\r\n]+|\s+(?!\S)|\s+`} {
		var b, vj, mt bytes.Buffer
		if err := WriteBundle(&b, l.Vocab, pattern); err != nil {
			t.Fatal(err)
		}
		if err := WritePair(&vj, &mt, l.Vocab); err != nil {
			t.Fatal(err)
		}
		bv, err := ParseBundle("tokenizer.json", b.Bytes(), "", nil)
		if err != nil {
			t.Fatalf("pattern %q: the bundle does not load: %v", pattern, err)
		}
		pv, err := Parse("vocab.json", vj.Bytes(), "merges.txt", mt.Bytes())
		if err != nil {
			t.Fatal(err)
		}
		if bv.Size() != pv.Size() || bv.Info().Merges != pv.Info().Merges {
			t.Fatalf("bundle %d tokens %d merges, pair %d and %d", bv.Size(), bv.Info().Merges, pv.Size(), pv.Info().Merges)
		}
		be, err := NewEncoder(bv, Options{})
		if err != nil {
			t.Fatal(err)
		}
		pe, err := NewEncoder(pv, Options{SplitPattern: pattern})
		if err != nil {
			t.Fatal(err)
		}
		for _, text := range texts {
			if got, want := be.Encode([]byte(text)), pe.Encode([]byte(text)); !equalInts(got, want) {
				t.Fatalf("pattern %q: the bundle gives %d ids, the pair %d, on %.40q", pattern, len(got), len(want), text)
			}
		}
	}
}
