package bpe

import (
	"bytes"
	"fmt"
	"math/rand"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// bruteLearn is Algorithm 1 of Sennrich, Haddow and Birch (2016) run
// plainly on ids: recount every pair of every word before each merge, take
// the most frequent (ties as Learn breaks them), merge it left to right in
// every word. It is the reference the incremental learner is held to.
func bruteLearn(words [][]uint32, freq []int64, tokens [][]byte, k int, min int64) []LearnedMerge {
	tokens = append([][]byte(nil), tokens...)
	have := map[string]bool{}
	for _, t := range tokens {
		have[string(t)] = true
	}
	words = append([][]uint32(nil), words...)
	var out []LearnedMerge
	for len(out) < k {
		counts := map[[2]uint32]int64{}
		for w, s := range words {
			for i := 0; i+1 < len(s); i++ {
				counts[[2]uint32{s[i], s[i+1]}] += freq[w]
			}
		}
		var best [2]uint32
		var bestN int64 = -1
		for p, n := range counts {
			if have[string(tokens[p[0]])+string(tokens[p[1]])] {
				continue
			}
			better := n > bestN
			if n == bestN {
				if c := bytes.Compare(tokens[p[0]], tokens[best[0]]); c != 0 {
					better = c < 0
				} else {
					better = bytes.Compare(tokens[p[1]], tokens[best[1]]) < 0
				}
			}
			if better {
				best, bestN = p, n
			}
		}
		if bestN < min {
			break
		}
		id := uint32(len(tokens))
		joined := append(append([]byte(nil), tokens[best[0]]...), tokens[best[1]]...)
		tokens = append(tokens, joined)
		have[string(joined)] = true
		var saved int64
		for w, s := range words {
			var ns []uint32
			for i := 0; i < len(s); i++ {
				if i+1 < len(s) && s[i] == best[0] && s[i+1] == best[1] {
					ns = append(ns, id)
					saved += freq[w]
					i++
					continue
				}
				ns = append(ns, s[i])
			}
			words[w] = ns
		}
		out = append(out, LearnedMerge{Left: int(best[0]), Right: int(best[1]), ID: int(id), Count: bestN, Saved: saved})
	}
	return out
}

// baseWords returns the words of c segmented by its vocabulary, as
// bruteLearn takes them.
func baseWords(c *WordCount) ([][]uint32, []int64) {
	var ws [][]uint32
	var fs []int64
	c.Each(func(word string, n int64) {
		var s []uint32
		for _, id := range c.Encoder().EncodePiece([]byte(word)) {
			s = append(s, uint32(id))
		}
		ws = append(ws, s)
		fs = append(fs, n)
	})
	return ws, fs
}

func byteEncoder(t testing.TB, pattern string) *Encoder {
	t.Helper()
	e, err := NewEncoder(ByteVocab(), Options{SplitPattern: pattern})
	if err != nil {
		t.Fatal(err)
	}
	return e
}

func countText(e *Encoder, texts ...string) *WordCount {
	c := NewWordCount(e)
	for _, s := range texts {
		c.Add([]byte(s))
	}
	return c
}

func sameMerges(t *testing.T, what string, got, want []LearnedMerge) {
	t.Helper()
	if len(got) != len(want) {
		t.Fatalf("%s: %d merges, the plain learner %d", what, len(got), len(want))
	}
	for i := range got {
		if got[i] != want[i] {
			t.Fatalf("%s: merge %d is %+v, the plain learner's %+v", what, i, got[i], want[i])
		}
	}
}

// checkEncodes holds a learned vocabulary to the learner's own account: the
// encoder, applying the merges by rank, must give every learning word as
// many tokens fewer as the merges say they saved.
func checkEncodes(t *testing.T, c *WordCount, got *Learned) {
	t.Helper()
	before, after := int64(0), int64(0)
	old := c.Encoder()
	e, err := NewEncoder(got.Vocab, Options{SplitPattern: splitPattern(old)})
	if err != nil {
		t.Fatal(err)
	}
	c.Each(func(word string, n int64) {
		before += n * int64(len(old.EncodePiece([]byte(word))))
		after += n * int64(len(e.EncodePiece([]byte(word))))
	})
	var saved int64
	for _, m := range got.New {
		saved += m.Saved
	}
	if before-after != saved {
		t.Fatalf("re-encoding saves %d tokens (%d to %d); the learner counted %d", before-after, before, after, saved)
	}
}

// randomCorpus makes texts over a small alphabet, so that pairs repeat,
// ties are common and words such as "aaaa" overlap with themselves.
func randomCorpus(r *rand.Rand) []string {
	alpha := []string{"a", "b", "c", "d", " ", " ", "é", "\n"}
	var texts []string
	for range 1 + r.Intn(6) {
		var sb strings.Builder
		for range r.Intn(200) {
			sb.WriteString(alpha[r.Intn(len(alpha))])
		}
		texts = append(texts, sb.String())
	}
	return texts
}

func TestLearnMatchesPlainLearner(t *testing.T) {
	r := rand.New(rand.NewSource(17))
	for trial := range 150 {
		texts := randomCorpus(r)
		c := countText(byteEncoder(t, ""), texts...)
		if c.Len() == 0 {
			continue
		}
		k := 1 + r.Intn(40)
		min := int64(1 + r.Intn(3))
		got, err := Learn(c, LearnOptions{Merges: k, MinCount: min})
		if err != nil {
			t.Fatal(err)
		}
		ws, fs := baseWords(c)
		want := bruteLearn(ws, fs, ByteVocab().tokens, k, min)
		sameMerges(t, fmt.Sprintf("trial %d", trial), got.New, want)
		checkEncodes(t, c, got)
	}
}

// On top of GPT-2 the learner starts from GPT-2's segmentations, and must
// still agree with the plain learner, including the rule that a pair that
// spells an existing token is never merged.
func TestLearnExtendMatchesPlainLearner(t *testing.T) {
	e := gpt2(t, Options{})
	r := rand.New(rand.NewSource(5))
	for range 8 {
		words := []string{" morsel", " quillandri", " bathyphorus", " the", " vennskarth", "ing", " th9", "-chain"}
		var sb strings.Builder
		for range 300 {
			sb.WriteString(words[r.Intn(len(words))])
		}
		c := countText(e, sb.String())
		k := 1 + r.Intn(30)
		got, err := Learn(c, LearnOptions{Merges: k, MinCount: 1})
		if err != nil {
			t.Fatal(err)
		}
		ws, fs := baseWords(c)
		sameMerges(t, "extend", got.New, bruteLearn(ws, fs, Default().tokens, k, 1))
		checkEncodes(t, c, got)
	}
}

func FuzzLearnMatchesPlainLearner(f *testing.F) {
	f.Add([]byte("low low low lower lower newest newest widest"), uint8(10))
	f.Add([]byte("aaaa aaa aa a abab ababab"), uint8(5))
	f.Add([]byte{0xff, 0xfe, ' ', 0xff, 0xfe, ' ', 0, 0}, uint8(3))
	f.Fuzz(func(t *testing.T, text []byte, k uint8) {
		if len(text) > 2000 {
			return
		}
		c := countText(byteEncoder(t, ""), string(text))
		if c.Len() == 0 {
			return
		}
		got, err := Learn(c, LearnOptions{Merges: int(k), MinCount: 1})
		if err != nil {
			t.Fatal(err)
		}
		ws, fs := baseWords(c)
		sameMerges(t, "fuzz", got.New, bruteLearn(ws, fs, ByteVocab().tokens, int(k), 1))
		checkEncodes(t, c, got)
	})
}

// The byte tokens of a fresh vocabulary have GPT-2's ids (the order that
// GPT-2's vocab.json gives them, see gpt2/SOURCE.md).
func TestByteVocabMatchesGPT2Bytes(t *testing.T) {
	bv, g := ByteVocab(), Default()
	if bv.Size() != 256 {
		t.Fatalf("%d tokens, want 256", bv.Size())
	}
	for b := 0; b < 256; b++ {
		if bv.byteID[b] != g.byteID[b] {
			t.Fatalf("byte 0x%02X has id %d, GPT-2 gives %d", b, bv.byteID[b], g.byteID[b])
		}
	}
}

// sennrichWords counts a dictionary of Sennrich et al. (2016) with each
// word ending in "_", the paper's end-of-word symbol, and split at white
// space so that each dictionary entry is one word.
func sennrichWords(t *testing.T, dict map[string]int64, order []string) *WordCount {
	c := NewWordCount(byteEncoder(t, `\S+`))
	for _, w := range order {
		c.add([]byte(w+"_"), dict[w])
	}
	return c
}

// Figure 1 of Sennrich, Haddow and Birch (2016): from {low, lowest, newer,
// wider} the paper learns r· -> r·, l o -> lo, lo w -> low, e r· -> er·,
// each at count 2, and segments the unseen "lower" as "low er·". The paper
// does not say how it breaks ties, and at every step several pairs share
// the top count; ours must be one of them (the paper's algorithm, recounted
// by the string-based toy learner in sennrich_test.go), at the paper's
// counts, and must segment "lower" as the paper does.
func TestLearnSennrichFigure1(t *testing.T) {
	order := []string{"low", "lowest", "newer", "wider"}
	dict := map[string]int64{"low": 1, "lowest": 1, "newer": 1, "wider": 1}
	got, err := Learn(sennrichWords(t, dict, order), LearnOptions{Merges: 4, MinCount: 1})
	if err != nil {
		t.Fatal(err)
	}
	toy := toyDict(map[string]int{"low": 1, "lowest": 1, "newer": 1, "wider": 1}, order)
	checkAgainstToy(t, got, toy, []int64{2, 2, 2, 2})
	e, err := NewEncoder(got.Vocab, Options{SplitPattern: `\S+`})
	if err != nil {
		t.Fatal(err)
	}
	if p := toyPieces(e, "lower_"); p != "low er_" {
		t.Fatalf("lower segments as %q; the paper gives \"low er·\"", p)
	}
}

// Algorithm 1 of the paper runs ten merges on {low: 5, lower: 2, newest: 6,
// widest: 3}. The counts of the ten merges follow from the dictionary by
// hand, whatever the tie-break (e s, s t and t· all at 9; then 9, 9, 7, 7,
// 6, 6, 6, 5, 3; see TestSennrichAlgorithm1). Ours breaks the tie at 6 by
// bytes (e w before n e), so our ten merges make "newest·" and "lowest·"
// whole or nearly as the paper's do.
func TestLearnSennrichAlgorithm1(t *testing.T) {
	order := []string{"low", "lower", "newest", "widest"}
	dict := map[string]int64{"low": 5, "lower": 2, "newest": 6, "widest": 3}
	got, err := Learn(sennrichWords(t, dict, order), LearnOptions{Merges: 10, MinCount: 1})
	if err != nil {
		t.Fatal(err)
	}
	toy := toyDict(map[string]int{"low": 5, "lower": 2, "newest": 6, "widest": 3}, order)
	checkAgainstToy(t, got, toy, []int64{9, 9, 9, 7, 7, 6, 6, 6, 5, 3})
	var names []string
	for _, m := range got.New {
		l, _ := got.Vocab.Token(m.Left)
		r, _ := got.Vocab.Token(m.Right)
		names = append(names, string(l)+" "+string(r))
	}
	// The rule stated on Learn, applied by hand to the counts above.
	want := []string{"e s", "es t", "est _", "l o", "lo w", "e w", "ew est_", "n ewest_", "low _", "d est_"}
	if strings.Join(names, ", ") != strings.Join(want, ", ") {
		t.Fatalf("merges %q, want %q", names, want)
	}
}

// checkAgainstToy replays our merges on the toy learner's string words: at
// every step our merge must be among the pairs of top count there, at the
// count given.
func checkAgainstToy(t *testing.T, got *Learned, toy []toyWord, counts []int64) {
	t.Helper()
	if len(got.New) != len(counts) {
		t.Fatalf("%d merges, want %d", len(got.New), len(counts))
	}
	for i, m := range got.New {
		l, _ := got.Vocab.Token(m.Left)
		r, _ := got.Vocab.Token(m.Right)
		p := [2]string{string(l), string(r)}
		best, top := topPairs(pairCounts(toy))
		if !top[p] || int64(best) != counts[i] || m.Count != counts[i] {
			t.Fatalf("merge %d: %q at count %d; the top pairs are %v at %d, the paper's count %d", i, p, m.Count, top, best, counts[i])
		}
		applyToyMerge(toy, p)
	}
}

// demoTexts returns the demo corpus's files.
func demoTexts(t testing.TB) []string {
	t.Helper()
	paths, err := filepath.Glob("../testdata/demo/docs/*")
	if err != nil || len(paths) == 0 {
		t.Fatalf("demo corpus: %v", err)
	}
	var texts []string
	for _, p := range paths {
		data, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		texts = append(texts, string(data))
	}
	return texts
}

// An extended vocabulary keeps GPT-2's ids, merges and specials, and gives
// GPT-2's ids for every pre-token that no new merge touches; where one
// does, the ids stand for the same bytes in fewer tokens.
func TestExtendKeepsBase(t *testing.T) {
	base := gpt2(t, Options{})
	got, err := Learn(countText(base, demoTexts(t)...), LearnOptions{Merges: 300})
	if err != nil {
		t.Fatal(err)
	}
	if len(got.New) != 300 {
		t.Fatalf("%d merges learned, want 300", len(got.New))
	}
	v, g := got.Vocab, Default()
	for id := range g.tokens {
		if !bytes.Equal(v.tokens[id], g.tokens[id]) {
			t.Fatalf("token %d changed", id)
		}
	}
	gm, vm := g.Merges(), v.Merges()
	for r := range gm {
		if gm[r] != vm[r] {
			t.Fatalf("merge %d changed: %v to %v", r, gm[r], vm[r])
		}
	}
	for i, m := range got.New {
		if m.ID != g.Size()+i || vm[len(gm)+i] != [3]int{m.Left, m.Right, m.ID} {
			t.Fatalf("new merge %d: %+v, ranked %v", i, m, vm[len(gm)+i])
		}
	}
	if len(v.Specials()) != 1 || v.Specials()[0] != g.Specials()[0] {
		t.Fatalf("specials %v", v.Specials())
	}
	ext, err := NewEncoder(v, Options{})
	if err != nil {
		t.Fatal(err)
	}
	texts := append(demoTexts(t), goldenTexts(t)...)
	touched, kept := 0, 0
	for _, text := range texts {
		base.Split([]byte(text), func(a, b int, _ bool) {
			p := []byte(text[a:b])
			old, now := base.EncodePiece(p), ext.EncodePiece(p)
			if newIn(now, g.Size()) {
				touched++
				if len(now) >= len(old) || !bytes.Equal(ext.Decode(now), p) {
					t.Fatalf("%q: %v under GPT-2, %v extended", p, old, now)
				}
				return
			}
			kept++
			if !equalInts(old, now) {
				t.Fatalf("%q: no new token, yet %v under GPT-2 and %v extended", p, old, now)
			}
		})
	}
	if touched == 0 || kept == 0 {
		t.Fatalf("%d pre-tokens touched by the new merges, %d not: the test tests nothing", touched, kept)
	}
}

func newIn(ids []int, from int) bool {
	for _, id := range ids {
		if id >= from {
			return true
		}
	}
	return false
}

func equalInts(a, b []int) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if a[i] != b[i] {
			return false
		}
	}
	return true
}

func goldenTexts(t testing.TB) []string {
	t.Helper()
	paths, _ := filepath.Glob("../testdata/golden/corpus/*")
	var texts []string
	for _, p := range paths {
		data, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		texts = append(texts, string(data))
	}
	return texts
}

func TestLearnErrors(t *testing.T) {
	if _, err := Learn(NewWordCount(byteEncoder(t, "")), LearnOptions{Merges: 3}); err != ErrNoWords {
		t.Fatalf("empty count: %v", err)
	}
	c := countText(byteEncoder(t, ""), "abc abc")
	if _, err := Learn(c, LearnOptions{Merges: -1}); err == nil {
		t.Fatal("negative merges accepted")
	}
	got, err := Learn(c, LearnOptions{Merges: 100})
	if err != nil {
		t.Fatal(err)
	}
	// " abc" occurs once and "abc" once: a, b, c pairs twice... only pairs
	// seen twice are merged (MinCount 2 by default): a b, then ab c.
	if len(got.New) != 2 {
		t.Fatalf("%d merges from \"abc abc\", want 2 (a b, ab c)", len(got.New))
	}
}

// The merges do not depend on the order in which words were first seen.
func TestLearnIgnoresOrder(t *testing.T) {
	texts := demoTexts(t)
	a := countText(gpt2(t, Options{}), texts...)
	r := rand.New(rand.NewSource(3))
	var ws []string
	var ns []int64
	a.Each(func(w string, n int64) { ws = append(ws, w); ns = append(ns, n) })
	b := NewWordCount(a.Encoder())
	for _, i := range r.Perm(len(ws)) {
		b.add([]byte(ws[i]), ns[i])
	}
	la, err := Learn(a, LearnOptions{Merges: 400})
	if err != nil {
		t.Fatal(err)
	}
	lb, err := Learn(b, LearnOptions{Merges: 400})
	if err != nil {
		t.Fatal(err)
	}
	sameMerges(t, "shuffled", lb.New, la.New)
}

func BenchmarkLearn(b *testing.B) {
	var all []byte
	for _, s := range demoTexts(b) {
		all = append(all, s...)
	}
	c := countText(gpt2(b, Options{}), string(all))
	fresh := countText(byteEncoder(b, ""), string(all))
	b.Run("extend-gpt2-500", func(b *testing.B) {
		for range b.N {
			Learn(c, LearnOptions{Merges: 500})
		}
	})
	b.Run("bytes-2000", func(b *testing.B) {
		for range b.N {
			Learn(fresh, LearnOptions{Merges: 2000})
		}
	})
}

// Each new token's uses, checked against encoding every word plainly.
func TestUses(t *testing.T) {
	c := countText(gpt2(t, Options{}), demoTexts(t)...)
	l, err := Learn(c, LearnOptions{Merges: 120})
	if err != nil {
		t.Fatal(err)
	}
	uses, err := l.Uses(c, 3)
	if err != nil {
		t.Fatal(err)
	}
	e, _ := NewEncoder(l.Vocab, Options{})
	occurs := map[int]int64{}
	holders := map[int]map[string]int64{}
	c.Each(func(w string, n int64) {
		for _, id := range e.EncodePiece([]byte(w)) {
			if id >= l.Base.Size() {
				occurs[id] += n
				if holders[id] == nil {
					holders[id] = map[string]int64{}
				}
				holders[id][w] = n
			}
		}
	})
	used := 0
	for i, u := range uses {
		if u.ID != l.New[i].ID || occurs[u.ID] != u.Occurs {
			t.Fatalf("token %d: %+v, want id %d occurring %d times", i, u, l.New[i].ID, occurs[u.ID])
		}
		if len(u.Words) > 3 || len(u.Words) != min(3, len(holders[u.ID])) {
			t.Fatalf("token %q: %d words, %d hold it", u.Token, len(u.Words), len(holders[u.ID]))
		}
		for k, w := range u.Words {
			if holders[u.ID][w.Word] != w.Count {
				t.Fatalf("token %q: %q counted %d", u.Token, w.Word, w.Count)
			}
			for h, n := range holders[u.ID] {
				if n > u.Words[len(u.Words)-1].Count && !hasWord(u.Words, h) {
					t.Fatalf("token %q: %q (%d) is more frequent than the words listed %v", u.Token, h, n, u.Words)
				}
			}
			if k > 0 && w.Count > u.Words[k-1].Count {
				t.Fatalf("token %q: words not by count %v", u.Token, u.Words)
			}
		}
		if u.Occurs > 0 {
			used++
		}
	}
	if used == 0 {
		t.Fatal("no new token is used")
	}
}

func hasWord(us []WordUse, w string) bool {
	for _, u := range us {
		if u.Word == w {
			return true
		}
	}
	return false
}

// A vocabulary that is not plain byte-level BPE is refused.
func TestLearnRefusesCharacterLevel(t *testing.T) {
	v, _ := loadTestBundle(t, "metaspace-32k")
	e, err := NewEncoder(v, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if _, err := Learn(countText(e, "some text some text"), LearnOptions{Merges: 3}); err == nil {
		t.Fatal("learning on a character-level bundle was not refused")
	}
}

// On top of a byte-level bundle (qwen3: NFC, its own split pattern, added
// tokens outside the model's vocabulary) the learned vocabulary keeps the
// bundle's pipeline: the base's ids come back on every line that no new
// token touches, the learner's savings are the re-encoded ones, and the
// written bundle loads and encodes as the learned vocabulary does.
func TestExtendBundle(t *testing.T) {
	base, _ := loadTestBundle(t, "qwen3")
	be, err := NewEncoder(base, Options{})
	if err != nil {
		t.Fatal(err)
	}
	c := countText(be, demoTexts(t)...)
	got, err := Learn(c, LearnOptions{Merges: 100})
	if err != nil {
		t.Fatal(err)
	}
	checkEncodes(t, c, got)
	ext, err := NewEncoder(got.Vocab, Options{})
	if err != nil {
		t.Fatal(err)
	}
	var b bytes.Buffer
	if err := WriteBundle(&b, got.Vocab, ""); err != nil {
		t.Fatal(err)
	}
	if err := WritePair(&bytes.Buffer{}, &bytes.Buffer{}, got.Vocab); err == nil {
		t.Fatal("a vocabulary with a bundle's pipeline was written as a pair")
	}
	back, err := ParseBundle("tokenizer.json", b.Bytes(), "", nil)
	if err != nil {
		t.Fatalf("the written bundle does not load: %v", err)
	}
	we, err := NewEncoder(back, Options{})
	if err != nil {
		t.Fatal(err)
	}
	touched, kept := 0, 0
	for _, text := range append(demoTexts(t), goldenTexts(t)...) {
		for _, line := range strings.SplitAfter(text, "\n") {
			old, now := be.Encode([]byte(line)), ext.Encode([]byte(line))
			if w := we.Encode([]byte(line)); !equalInts(w, now) {
				t.Fatalf("%q: the written bundle gives %v, the learned vocabulary %v", line, w, now)
			}
			if newIn(now, base.Size()) {
				touched++
				if len(now) >= len(old) {
					t.Fatalf("%q: %d tokens under qwen3, %d extended", line, len(old), len(now))
				}
				continue
			}
			kept++
			if !equalInts(old, now) {
				t.Fatalf("%q: no new token, yet %v under qwen3 and %v extended", line, old, now)
			}
		}
	}
	if touched == 0 || kept == 0 {
		t.Fatalf("%d lines touched, %d not: the test tests nothing", touched, kept)
	}
}
