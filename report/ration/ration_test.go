package ration

import (
	"bytes"
	"errors"
	"math"
	"math/rand"
	"os"
	"strings"
	"testing"

	"morsel/bpe"
	"morsel/report"
	"morsel/report/internal/reporttest"
	"morsel/report/request"
)

// checkPlan checks the chunk properties that hold for any plan: each
// framed chunk re-encoded on its own has the tokens reported and fits the
// budget, offsets are in order and inside the text, no cut falls inside a
// UTF-8 character, and without overlap the chunks rebuild the text.
func checkPlan(t testing.TB, r *Rationer, name string, text []byte, chunks []Chunk) {
	t.Helper()
	if len(text) > 0 && len(chunks) == 0 {
		t.Fatalf("%s: no chunks for %d bytes", name, len(text))
	}
	var rebuilt []byte
	prevStart, prevEnd := -1, 0
	for i, c := range chunks {
		if c.Chunk != i || c.Start < 0 || c.End > len(text) || c.Start >= c.End || c.Start <= prevStart || c.End <= prevEnd {
			t.Fatalf("%s: chunk %d has bad offsets [%d, %d) after [%d, %d)", name, i, c.Start, c.End, prevStart, prevEnd)
		}
		if r.Overlap == 0 && c.Start != prevEnd {
			t.Fatalf("%s: chunk %d starts at %d, the previous ended at %d", name, i, c.Start, prevEnd)
		}
		if r.Overlap > 0 && c.Start > prevEnd {
			t.Fatalf("%s: chunk %d leaves a gap [%d, %d)", name, i, prevEnd, c.Start)
		}
		for _, p := range []int{c.Start, c.End} {
			if !charEdge(text, p) {
				t.Fatalf("%s: chunk %d cut at %d, inside a UTF-8 character", name, i, p)
			}
		}
		got := r.Enc.Count(r.Frame.Assemble(report.Where(c.Source, c.Record), text[c.Start:c.End])) + r.Overhead
		if got != c.Tokens {
			t.Fatalf("%s: chunk %d [%d, %d) reported %d tokens, re-encoded %d", name, i, c.Start, c.End, c.Tokens, got)
		}
		if got > r.Budget {
			t.Fatalf("%s: chunk %d takes %d tokens, budget %d", name, i, got, r.Budget)
		}
		if r.Overlap == 0 {
			rebuilt = append(rebuilt, text[c.Start:c.End]...)
		} else if i > 0 {
			rebuilt = append(rebuilt, text[prevEnd:c.End]...)
		} else {
			rebuilt = append(rebuilt, text[c.Start:c.End]...)
		}
		prevStart, prevEnd = c.Start, c.End
	}
	if !bytes.Equal(rebuilt, text) {
		t.Fatalf("%s: the chunks do not rebuild the text (%d bytes vs %d)", name, len(rebuilt), len(text))
	}
}

func TestRationRealText(t *testing.T) {
	enc := reporttest.Encoder(t)
	frame := demoFrame(t)
	texts := reporttest.RealTexts(t)
	for _, tc := range []struct {
		name    string
		frame   *request.Frame
		budget  int
		overlap int
		over    int
	}{
		{"bare-64", nil, 64, 0, 0},
		{"bare-300", nil, 300, 0, 0},
		{"framed-400", frame, 400, 0, 3},
		{"framed-1024", frame, 1024, 0, 0},
		{"overlap", nil, 200, 40, 0},
		{"framed-overlap", frame, 500, 100, 0},
	} {
		t.Run(tc.name, func(t *testing.T) {
			r := &Rationer{Enc: enc, Frame: tc.frame, Budget: tc.budget, Overlap: tc.overlap, Overhead: tc.over}
			for name, text := range texts {
				chunks, tokens, err := r.Cut(name, 0, text, false)
				if err != nil {
					t.Fatalf("%s: %v", name, err)
				}
				if want := enc.Count(text); tokens != want {
					t.Fatalf("%s: document tokens %d, Count says %d", name, tokens, want)
				}
				checkPlan(t, r, name, text, chunks)
			}
		})
	}
}

// randomText mixes prose, blank lines, runs of spaces, digits, CJK,
// emoji, combining marks and invalid bytes.
func randomText(rng *rand.Rand, n int) []byte {
	parts := []string{"word", " the", " Bathyphorus", ".", "!", "? ", "\n", "\n\n", "\r\n", "  ", "\t", "   x", "1234",
		"ü", "日本語", "。", "🦑", "e\u0301", "'s", " 's", "\xff", "\xe3\x81", "-----", "QX-7731-Rb", " \n ", "\u00a0", "\u3000"}
	var b []byte
	for len(b) < n {
		b = append(b, parts[rng.Intn(len(parts))]...)
	}
	return b
}

func TestRationRandomText(t *testing.T) {
	enc := reporttest.Encoder(t)
	frame, err := request.ParseFrame("f", []byte("Say it short.\n{{document}}\n-- end of {{source}} --"))
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewSource(7))
	for i := 0; i < 200; i++ {
		text := randomText(rng, 50+rng.Intn(4000))
		var f *request.Frame
		if i%2 == 1 {
			f = frame
		}
		budget := 20 + rng.Intn(200)
		overlap := 0
		if i%3 == 2 {
			overlap = rng.Intn(budget / 4)
		}
		r := &Rationer{Enc: enc, Frame: f, Budget: budget, Overlap: overlap}
		chunks, _, err := r.Cut("rand", i, text, false)
		if err != nil {
			t.Fatalf("text %d: %v", i, err)
		}
		checkPlan(t, r, "random", text, chunks)
	}
}

// TestRationGeneric checks the plan when every chunk is counted whole.
func TestRationGeneric(t *testing.T) {
	enc := reporttest.Encoder(t)
	rng := rand.New(rand.NewSource(11))
	for i := 0; i < 40; i++ {
		text := randomText(rng, 2000)
		r := &Rationer{Enc: enc, Budget: 50 + rng.Intn(100), Generic: true}
		chunks, _, err := r.Cut("g", 0, text, false)
		if err != nil {
			t.Fatal(err)
		}
		checkPlan(t, r, "generic", text, chunks)
	}
}

// TestRationSliceOverflow keeps a case where taking a slice of the whole
// document's ids would overflow a chunk. U+3000 (ideographic space) is
// three bytes that GPT-2 encodes as more than one byte-level token, so the
// document's first two ids are "\n\n" and the first byte of U+3000; that
// slice, decoded and encoded on its own, takes three tokens, over a budget
// of two. The planner must count each chunk itself and never cut inside a
// character.
func TestRationSliceOverflow(t *testing.T) {
	enc := reporttest.Encoder(t)
	text := []byte("\n\n\u3000\u00fc\u3002QX-7731-Rb\u00a0 x!\u3000 salt marrow\n\nend")
	ids := enc.Encode(text)
	const budget = 2
	naive := enc.Decode(ids[:budget])
	if got := enc.Count(naive); got <= budget {
		t.Fatalf("the crafted case no longer holds: ids[:%d] = %q re-encodes to %d tokens", budget, naive, got)
	}
	for b := budget; b <= 12; b++ {
		r := &Rationer{Enc: enc, Budget: b}
		chunks, _, err := r.Cut("t", 0, text, false)
		if err != nil {
			t.Fatalf("budget %d: %v", b, err)
		}
		checkPlan(t, r, "slice", text, chunks)
	}
	// A frame that ends in a space joins the chunk's first word ("of" +
	// " salt"), and "\n\n" at a chunk's end is one token where the
	// document has two: counts must come from the framed chunk itself.
	fr, err := request.ParseFrame("f", []byte("Summary of {{document}}\n"))
	if err != nil {
		t.Fatal(err)
	}
	text3 := bytes.Repeat([]byte("salt marrow.\n\n"), 40)
	for b := 8; b < 40; b += 3 {
		r := &Rationer{Enc: enc, Frame: fr, Budget: b}
		chunks, _, err := r.Cut("t", 0, text3, false)
		if err != nil {
			t.Fatalf("budget %d: %v", b, err)
		}
		checkPlan(t, r, "junction", text3, chunks)
	}
}

func TestRationCutPreference(t *testing.T) {
	enc := reporttest.Encoder(t)
	para := "The buoy was lost in the storm. Its mooring line parted at the swivel.\n\n"
	line := "Line one of the log is short\n"
	text := []byte(para + line + line + "The rest runs on. And on. And on without a break for a while here")
	budget := enc.Count([]byte(para+line)) + 3
	r := &Rationer{Enc: enc, Budget: budget}
	chunks, _, err := r.Cut("t", 0, text, false)
	if err != nil {
		t.Fatal(err)
	}
	checkPlan(t, r, "pref", text, chunks)
	if chunks[0].Cut != CutParagraph && chunks[0].Cut != CutLine {
		t.Fatalf("first cut %q at %d, want a paragraph or line break", chunks[0].Cut, chunks[0].End)
	}
	if chunks[0].End != len(para)+len(line) && chunks[0].End != len(para) {
		t.Fatalf("first chunk ends at %d, want %d or %d", chunks[0].End, len(para), len(para)+len(line))
	}
	// One pre-token longer than the budget is cut inside, at character
	// edges: 300 repeats of a two-byte letter with no spaces.
	long := bytes.Repeat([]byte("ж"), 300)
	r = &Rationer{Enc: enc, Budget: 10}
	chunks, _, err = r.Cut("t", 0, long, false)
	if err != nil {
		t.Fatal(err)
	}
	checkPlan(t, r, "long", long, chunks)
	if chunks[0].Cut != CutInside {
		t.Fatalf("cut %q, want inside", chunks[0].Cut)
	}
}

func TestRationNoRoom(t *testing.T) {
	enc := reporttest.Encoder(t)
	fr, _ := request.ParseFrame("f", []byte("A long instruction that takes more than five tokens: {{document}}"))
	r := &Rationer{Enc: enc, Frame: fr, Budget: 5}
	_, _, err := r.Cut("t", 0, []byte("hello"), false)
	if err == nil {
		t.Fatal("no error for a budget smaller than the frame")
	}
}

func TestCharEdge(t *testing.T) {
	s := []byte("aж日🦑\xff\xe3\x81b")
	want := map[int]bool{0: true, 1: true, 2: false, 3: true, 4: false, 5: false, 6: true, 7: false, 8: false, 9: false, 10: true, 11: true, 12: true, 13: true, 14: true}
	for p, w := range want {
		if got := charEdge(s, p); got != w {
			t.Errorf("charEdge(%q, %d) = %v, want %v", s, p, got, w)
		}
	}
}

func FuzzRation(f *testing.F) {
	enc := reporttest.Encoder(f)
	fr, _ := request.ParseFrame("f", []byte("Read:\n{{document}}\nDone."))
	f.Add([]byte("one two.\n\nthree\xff 日本語。 four"), uint8(12), uint8(0), true)
	f.Add([]byte("\n\n\u3000\u00fc\u3002QX"), uint8(2), uint8(0), false)
	f.Add(bytes.Repeat([]byte("ab "), 50), uint8(20), uint8(5), false)
	f.Fuzz(func(t *testing.T, text []byte, budget, overlap uint8, framed bool) {
		r := &Rationer{Enc: enc, Budget: int(budget) + 1, Overlap: int(overlap) % (int(budget)/2 + 1)}
		if framed {
			r.Frame = fr
		}
		chunks, _, err := r.Cut("z", 0, text, false)
		if err != nil {
			if !errors.Is(err, ErrNoRoom) {
				t.Fatal(err)
			}
			return
		}
		checkPlan(t, r, "fuzz", text, chunks)
	})
}

// TestRationHonorSpecials plans with special-token strings mapped to their
// ids; the demo's logger note holds one.
func TestRationHonorSpecials(t *testing.T) {
	enc, err := bpe.NewEncoder(bpe.Default(), bpe.Options{Specials: bpe.SpecialsHonor})
	if err != nil {
		t.Fatal(err)
	}
	text, err := os.ReadFile("../../testdata/demo/docs/notes-logger-gateway-glitch.txt")
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Contains(text, []byte("<|endoftext|>")) {
		t.Fatal("the demo note no longer holds a special-token string")
	}
	for _, budget := range []int{8, 30, 100} {
		r := &Rationer{Enc: enc, Budget: budget}
		chunks, _, err := r.Cut("n", 0, text, false)
		if err != nil {
			t.Fatal(err)
		}
		checkPlan(t, r, "honor", text, chunks)
	}
}

// demoFrame returns the demo corpus's prompt frame.
func demoFrame(tb testing.TB) *request.Frame {
	tb.Helper()
	path := reporttest.Testdata("demo/settings/frame.txt")
	data, err := os.ReadFile(path)
	if err != nil {
		tb.Fatal(err)
	}
	f, err := request.ParseFrame(path, data)
	if err != nil {
		tb.Fatal(err)
	}
	return f
}

// The request tokens summed past 2^63-1 are an error naming the document,
// which is left out; so are the chunks counted past it.
func TestCollectorTotalOverflow(t *testing.T) {
	r := &Rationer{Enc: reporttest.Encoder(t), Budget: 100}
	rc := NewCollector(r, "")
	half := Doc{Source: "a.txt", Chunks: 1, Tally: &Tally{Tokens: math.MaxInt64/2 + 1, Chunks: 1}}
	if err := rc.Add(half); err != nil {
		t.Fatal(err)
	}
	half.Source = "b.txt"
	half.Tally = &Tally{Tokens: math.MaxInt64/2 + 1, Chunks: 1}
	if err := rc.Add(half); !errors.Is(err, report.ErrTotalOverflow) || !strings.Contains(err.Error(), "b.txt") {
		t.Fatalf("second half of 2^63 request tokens: %v", err)
	}
	plan := Doc{Source: "c.txt", Chunks: 2, Plan: []Chunk{{Tokens: math.MaxInt64 / 2}, {Tokens: math.MaxInt64 / 2}}}
	if err := rc.Add(plan); !errors.Is(err, report.ErrTotalOverflow) {
		t.Fatalf("a plan past 2^63 request tokens: %v", err)
	}
	many := Doc{Source: "d.txt", Chunks: math.MaxInt}
	if err := rc.Add(many); !errors.Is(err, report.ErrTotalOverflow) {
		t.Fatalf("2^63 chunks after one: %v", err)
	}
	got := rc.Finish(nil)
	if got.Totals.Documents != 1 || got.Totals.Tokens != math.MaxInt64/2+1 || got.Totals.Chunks != 1 || len(got.Documents) != 1 {
		t.Fatalf("after the overflows: %+v", got.Totals)
	}
}
