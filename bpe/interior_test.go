package bpe

import (
	"bytes"
	"testing"
)

// The count of a framed text from its interior equals the count of the
// joined text, whatever the frame.
func FuzzInteriorCount(f *testing.F) {
	f.Add([]byte("Summarise:\n"), []byte("The cat sat.\nIt  purred\t"), []byte("\nAnswer:"))
	f.Add([]byte("x"), []byte("a b"), []byte("y"))
	f.Add([]byte(""), []byte("\xff\xfe \xc3"), []byte("\xa9 z"))
	f.Add([]byte("<|endof"), []byte("text|> a <|endoftext|> b"), []byte("<|endoftext"))
	plain := gpt2(f, Options{})
	honor := gpt2(f, Options{Specials: SpecialsHonor})
	other := gpt2(f, Options{SplitPattern: `\S+|\s+`})
	var b bytes.Buffer
	if err := WriteBundle(&b, Default(), ""); err != nil {
		f.Fatal(err)
	}
	bv, err := ParseBundle("tokenizer.json", b.Bytes(), "", nil)
	if err != nil {
		f.Fatal(err)
	}
	bundle, err := NewEncoder(bv, Options{})
	if err != nil {
		f.Fatal(err)
	}
	f.Fuzz(func(t *testing.T, before, text, after []byte) {
		for _, e := range []*Encoder{plain, honor, other, bundle} {
			in := e.Interior(text)
			got, _ := in.Count(before, after)
			if want := e.Count(join(before, text, after)); got != want {
				t.Fatalf("%q + %q + %q: %d tokens from the interior, %d joined", before, text, after, got, want)
			}
		}
	})
}

func TestInteriorCutsWhereSafe(t *testing.T) {
	e := gpt2(t, Options{})
	in := e.Interior([]byte("alpha beta gamma delta"))
	if in.head != 5 || in.end != 16 {
		t.Fatalf("interior %d:%d, want 5:16 (\" beta gamma\")", in.head, in.end)
	}
	if in := e.Interior([]byte("one")); in.head <= in.end {
		t.Fatal("a text with no safe place got an interior")
	}
}
