package bpe

import (
	"bytes"
	"math/rand/v2"
	"slices"
	"testing"
	"testing/iotest"
)

// The cut tests hold the stretch-wise ways of spm_stream.go (cut at every
// place allowed, on three goroutines, and read a few bytes at a time) to
// the whole text's encoding and, on the golden texts, to the reference's
// ids (Debian's python3-sentencepiece 0.1.97, via reference-ids.json).

// spmCutModels are the test models whose texts may be cut before
// normalization; the others keep a text whole (no dummy prefix, white
// space as a suffix, unused pieces, or a user-defined piece with a space).
var spmCutModels = map[string]bool{"nfkc-bytes.model": true, "identity.model": true, "digits.model": true,
	"keepspace.model": true, "ties.model": true}

func TestSentencePieceInputCutModels(t *testing.T) {
	for k, enc := range spmEncoders(t) {
		if got, want := enc.v.spm.inputCut, spmCutModels[spmModels[k]]; got != want {
			t.Errorf("%s: input cut allowed %v, want %v", spmModels[k], got, want)
		}
	}
}

// checkCutEqualsWhole holds every stretch-wise way to want, the ids of
// the whole text.
func checkCutEqualsWhole(t *testing.T, enc *Encoder, name string, text []byte, want []int) {
	t.Helper()
	if want == nil {
		want = []int{}
	}
	var st Stats
	got := spmAppendCut(enc, []int{}, text, 1, 3, &st)
	if !slices.Equal(got, want) {
		t.Fatalf("%s: ids cut at every place of %q:\n%v\nwhole: %v", name, text, got, want)
	}
	if st := enc.spmCountCut(text, 1, 3); st.Tokens != len(want) {
		t.Fatalf("%s: count cut at every place of %q: %d, whole %d", name, text, st.Tokens, len(want))
	}
	for _, size := range []int{1, 7, 64} {
		st, _, n, err := enc.countCut(iotest.HalfReader(bytes.NewReader(text)), size, 3, nil, nil, false)
		if err != nil || n != int64(len(text)) || st.Tokens != len(want) {
			t.Fatalf("%s: streamed count of %q (%d bytes at a time): %d tokens, %d bytes, %v; whole %d tokens",
				name, text, size, st.Tokens, n, err, len(want))
		}
	}
}

func TestSentencePieceCutGolden(t *testing.T) {
	g := loadSPMGolden(t)
	for _, gm := range g.Models {
		enc, err := NewEncoder(loadSPM(t, gm.Model), Options{})
		if err != nil {
			t.Fatal(err)
		}
		cuts := 0
		for _, c := range gm.Cases {
			text := spmCaseText(t, c.Source, c.Name, c.Text, c.Hex, c.SHA256)
			if enc.cutsInput() {
				cuts += len(enc.v.spm.stretches(text, 1)) - 1
			}
			checkCutEqualsWhole(t, enc, gm.Model+": "+c.Name+" (reference "+g.Reference+")", text, c.IDs)
		}
		if spmCutModels[gm.Model] && cuts < 100 {
			t.Errorf("%s: only %d cuts in the golden texts", gm.Model, cuts)
		}
	}
}

func TestSentencePieceCutRandom(t *testing.T) {
	r := rand.New(rand.NewPCG(7, 8))
	for k, enc := range spmEncoders(t) {
		for range 200 {
			text := randomSPMText(r, r.IntN(300))
			checkCutEqualsWhole(t, enc, spmModels[k], text, steps(enc, text))
		}
	}
}

// The public entry points take the stretch-wise way for long texts.
func TestSentencePieceLongTextCut(t *testing.T) {
	r := rand.New(rand.NewPCG(9, 10))
	text := randomSPMText(r, spmParallelMin+1000)
	enc := spmEncoders(t)[0]
	s := enc.get()
	var st Stats
	want := spmAppend(enc, s, []int{}, text, &st) // the whole text, on one core
	enc.put(s)
	if got := enc.Encode(text); !slices.Equal(got, want) {
		t.Fatalf("Encode of %d bytes: %d ids, whole %d", len(text), len(got), len(want))
	}
	if n := enc.Count(text); n != len(want) {
		t.Fatalf("Count of %d bytes: %d, whole %d", len(text), n, len(want))
	}
	if st, _, err := enc.CountReader(bytes.NewReader(text)); err != nil || st.Tokens != len(want) {
		t.Fatalf("CountReader of %d bytes: %d, %v; whole %d", len(text), st.Tokens, err, len(want))
	}
}

func TestNormalizeFastEqualsNormalize(t *testing.T) {
	r := rand.New(rand.NewPCG(11, 12))
	g := loadSPMGolden(t)
	for k, enc := range spmEncoders(t) {
		sp := enc.v.spm
		for _, c := range g.Models[0].Cases {
			checkNormalizeFast(t, sp, spmModels[k], spmCaseText(t, c.Source, c.Name, c.Text, c.Hex, c.SHA256))
		}
		for range 300 {
			checkNormalizeFast(t, sp, spmModels[k], randomSPMText(r, r.IntN(200)))
		}
	}
}

func checkNormalizeFast(t *testing.T, sp *spmModel, name string, text []byte) {
	t.Helper()
	var orig []int32
	want := sp.normalize(nil, text, &orig)
	if got := sp.normalizeFast(nil, text); !bytes.Equal(got, want) {
		t.Fatalf("%s: normalizeFast(%q) = %q, normalize gives %q", name, text, got, want)
	}
}

func FuzzSentencePieceCutEqualsWhole(f *testing.F) {
	addSPMSeeds(f)
	encs := spmEncoders(f)
	f.Fuzz(func(t *testing.T, text []byte) {
		for k, enc := range encs {
			checkNormalizeFast(t, enc.v.spm, spmModels[k], text)
			checkCutEqualsWhole(t, enc, spmModels[k], text, steps(enc, text))
		}
	})
}
