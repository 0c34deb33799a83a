package ration

import (
	"bytes"
	"errors"
	"io"
	"math/rand"
	"slices"
	"strings"
	"testing"

	"morsel/report/internal/reporttest"
	"morsel/report/request"
)

// pieceReader yields its text a few random bytes at a time.
type pieceReader struct {
	text []byte
	rng  *rand.Rand
	max  int
}

func (p *pieceReader) Read(b []byte) (int, error) {
	if len(p.text) == 0 {
		return 0, io.EOF
	}
	n := min(1+p.rng.Intn(p.max), len(b), len(p.text))
	copy(b, p.text[:n])
	p.text = p.text[n:]
	return n, nil
}

// streamAgrees fails t unless the text read in a window, in pieces of at
// most maxRead bytes and moved as soon as it can, gives the chunks (text
// included), the tokens and the bytes that ref's Cut gives for the whole
// text: ref is r itself, or r with Generic set (every chunk counted whole).
func streamAgrees(t testing.TB, r, ref *Rationer, name string, text []byte, rng *rand.Rand, maxRead, slideAt int) {
	t.Helper()
	whole, tokens, werr := ref.Cut(name, 3, text, true)
	var got []Chunk
	st, sb, serr := r.cutReader(name, 3, &pieceReader{text: text, rng: rng, max: maxRead}, slideAt, func(c Chunk) error {
		got = append(got, c)
		return nil
	})
	if (werr == nil) != (serr == nil) || werr != nil && werr.Error() != serr.Error() {
		t.Fatalf("%s: whole text: %v; window: %v", name, werr, serr)
	}
	if werr == nil && (int(st) != tokens || int(sb) != len(text)) {
		t.Fatalf("%s: window gives %d tokens and %d bytes, the whole text %d and %d", name, st, sb, tokens, len(text))
	}
	if !slices.Equal(got, whole) {
		for i := range min(len(got), len(whole)) {
			if got[i] != whole[i] {
				t.Fatalf("%s: chunk %d: window %+v, whole text %+v", name, i, got[i], whole[i])
			}
		}
		t.Fatalf("%s: window gives %d chunks, the whole text %d", name, len(got), len(whole))
	}
}

// A text read in a window is cut as the whole text is, whatever the
// budget, frame and overlap, whatever the reads return, and with the
// window moved after every chunk.
func TestCutReaderEqualsCut(t *testing.T) {
	enc := reporttest.Encoder(t)
	frame := demoFrame(t)
	rng := rand.New(rand.NewSource(17))
	texts := reporttest.RealTexts(t)
	names := make([]string, 0, len(texts))
	for name := range texts {
		names = append(names, name)
	}
	slices.Sort(names)
	for i := 0; i < 120; i++ {
		r := &Rationer{Enc: enc, Budget: 40 + rng.Intn(600)}
		if i%2 == 1 {
			r.Frame = frame
			r.Budget += 200
		}
		if i%3 == 0 {
			r.Overlap = rng.Intn(r.Budget / 3)
		}
		var text []byte
		var name string
		switch i % 4 {
		case 0:
			name = names[i/4%len(names)]
			text = texts[name]
			if len(text) > 60000 {
				text = text[:60000]
			}
		case 1:
			name, text = "random", randomText(rng, 50+rng.Intn(6000))
		case 2:
			// A long pre-token between prose: no mark inside it.
			name = "long word"
			text = []byte("The keeper counts the boats.\n\n" + strings.Repeat("q", 500+rng.Intn(3000)) + " and then the tide turns.\n")
		default:
			name = "spaces"
			text = []byte(strings.Repeat("tide  ", 200) + strings.Repeat(" ", 700) + "x\n" + strings.Repeat("a b\n", 300))
		}
		streamAgrees(t, r, r, name, text, rng, 1+rng.Intn(700), []int{1, 64, 4096}[i%3])
	}
}

// An empty stream gives no chunks, and a reader's error is the cut's.
func TestCutReaderEmptyAndFailing(t *testing.T) {
	r := &Rationer{Enc: reporttest.Encoder(t), Budget: 100}
	n := 0
	tok, size, err := r.CutReader("e", 0, strings.NewReader(""), true, func(Chunk) error { n++; return nil })
	if err != nil || n != 0 || tok != 0 || size != 0 {
		t.Fatalf("empty stream: %d chunks, %d tokens, %d bytes, %v", n, tok, size, err)
	}
	boom := errors.New("disk gone")
	rd := io.MultiReader(strings.NewReader(strings.Repeat("the boats come in. ", 500)), &failing{boom})
	if _, _, err := r.CutReader("f", 0, rd, false, func(Chunk) error { return nil }); !errors.Is(err, boom) {
		t.Fatalf("failing stream: %v, want %v", err, boom)
	}
}

type failing struct{ err error }

func (f *failing) Read([]byte) (int, error) { return 0, f.err }

// FuzzCutReader holds the window's plan to the whole text's on any text.
func FuzzCutReader(f *testing.F) {
	f.Add([]byte("The keeper counts the boats.\n\nAt dawn. At dusk!\n"), uint16(60), uint16(0), uint8(7))
	f.Add(bytes.Repeat([]byte("y\n"), 400), uint16(30), uint16(5), uint8(1))
	f.Add([]byte(strings.Repeat("a", 900)+" "+strings.Repeat("日本語。", 50)), uint16(25), uint16(3), uint8(200))
	enc := reporttest.Encoder(f)
	frame, err := request.ParseFrame("f", []byte("Say it short.\n{{document}}\n-- end --"))
	if err != nil {
		f.Fatal(err)
	}
	f.Fuzz(func(t *testing.T, text []byte, budget, overlap uint16, read uint8) {
		if len(text) > 20000 {
			return
		}
		r := &Rationer{Enc: enc, Budget: 20 + int(budget)%800}
		if budget%2 == 1 {
			r.Frame = frame
		}
		if r.Overlap = int(overlap) % 400; 2*r.Overlap >= r.Budget {
			r.Overlap = 0
		}
		streamAgrees(t, r, r, "fuzz", text, rand.New(rand.NewSource(int64(len(text)))), 1+int(read), 1+int(read)%3*50)
	})
}
