package bpe

// Golden ids: the expected values in ../testdata/golden/gpt2-ids.json come
// from the reference library @huggingface/tokenizers 0.2.0 (npm registry,
// version pinned in scripts/golden/package.json and package-lock.json), run by
// scripts/golden/make-golden.js over the GPT-2 vocabulary pair with a
// byte-level pre-tokenizer (GPT-2 split pattern, no prefix space), a
// byte-level decoder and "<|endoftext|>" = 50256 as an added special token.
// The JSON file names the library and version again; the test reports them
// beside every comparison. The corpus and its sources are listed in
// ../testdata/golden/SOURCES.md.

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"unicode"
	"unicode/utf8"
)

const (
	goldenDir  = "../testdata/golden"
	goldenFile = goldenDir + "/gpt2-ids.json"
)

// golden is the layout of gpt2-ids.json.
type golden struct {
	Library      string       `json:"library"`
	Version      string       `json:"version"`
	VocabSHA256  string       `json:"vocab_sha256"`
	MergesSHA256 string       `json:"merges_sha256"`
	Cases        []goldenCase `json:"cases"`
}

// goldenCase is one text and the ids the reference library gave for it.
// Source "corpus" names a file in corpus/; source "inline" carries Text.
// Mode "ordinary" encodes special strings as text; "special" honours them.
type goldenCase struct {
	Name   string `json:"name"`
	Source string `json:"source"`
	Mode   string `json:"mode"`
	Text   string `json:"text"`
	Bytes  int    `json:"bytes"`
	SHA256 string `json:"sha256"`
	IDs    []int  `json:"ids"`
}

func loadGolden(t *testing.T) *golden {
	t.Helper()
	data, err := os.ReadFile(goldenFile)
	if err != nil {
		t.Fatalf("reading golden ids: %v (regenerate with: cd scripts/golden && npm ci && node make-golden.js)", err)
	}
	var g golden
	if err := json.Unmarshal(data, &g); err != nil {
		t.Fatalf("%s: %v", goldenFile, err)
	}
	if g.Library == "" || g.Version == "" || len(g.Cases) == 0 {
		t.Fatalf("%s: missing library, version or cases", goldenFile)
	}
	return &g
}

// text returns the bytes of c and checks them against the size and hash
// recorded when the ids were made, so that an edited corpus file is reported
// as stale goldens rather than as an engine fault.
func (c goldenCase) text(t *testing.T) []byte {
	t.Helper()
	var b []byte
	switch c.Source {
	case "corpus":
		var err error
		b, err = os.ReadFile(filepath.Join(goldenDir, "corpus", c.Name))
		if err != nil {
			t.Fatalf("corpus file: %v", err)
		}
	case "inline":
		b = []byte(c.Text)
	default:
		t.Fatalf("case %q: unknown source %q", c.Name, c.Source)
	}
	sum := sha256.Sum256(b)
	if len(b) != c.Bytes || hex.EncodeToString(sum[:]) != c.SHA256 {
		t.Fatalf("case %q: text (%d bytes) differs from the one the golden ids were made from (%d bytes); regenerate %s", c.Name, len(b), c.Bytes, goldenFile)
	}
	return b
}

// TestGoldenVocabPair checks that the engine's readable GPT-2 pair is the
// one the golden ids were made with.
func TestGoldenVocabPair(t *testing.T) {
	g := loadGolden(t)
	for _, f := range []struct{ path, want string }{
		{"gpt2/vocab.json", g.VocabSHA256},
		{"gpt2/merges.txt", g.MergesSHA256},
	} {
		data, err := os.ReadFile(f.path)
		if err != nil {
			t.Fatalf("reading vocabulary file: %v", err)
		}
		sum := sha256.Sum256(data)
		if got := hex.EncodeToString(sum[:]); got != f.want {
			t.Errorf("%s: sha256 %s, golden ids (%s %s) were made with %s", f.path, got, g.Library, g.Version, f.want)
		}
	}
	if n := Default().Size(); n != 50257 {
		t.Errorf("Default().Size() = %d, want 50257 (GPT-2 vocabulary)", n)
	}
}

// TestGoldenIDs encodes every golden case with the engine and compares it id
// for id with the reference library's ids. It also checks that Count agrees
// with Encode and that Decode gives back the input bytes.
func TestGoldenIDs(t *testing.T) {
	g := loadGolden(t)
	ref := g.Library + " " + g.Version
	t.Logf("golden ids from %s (%s)", ref, goldenFile)

	ordinary, err := NewEncoder(Default(), Options{})
	if err != nil {
		t.Fatal(err)
	}
	honor, err := NewEncoder(Default(), Options{Specials: SpecialsHonor})
	if err != nil {
		t.Fatal(err)
	}

	total := 0
	for _, c := range g.Cases {
		t.Run(c.Mode+"/"+c.Name, func(t *testing.T) {
			text := c.text(t)
			var enc *Encoder
			switch c.Mode {
			case "ordinary":
				enc = ordinary
			case "special":
				enc = honor
			default:
				t.Fatalf("case %q: unknown mode %q", c.Name, c.Mode)
			}
			got := enc.Encode(text)
			if msg := firstMismatch(enc, text, c.IDs, got); msg != "" {
				t.Errorf("%s: engine differs from %s: %s", c.Name, ref, msg)
			}
			if n := enc.Count(text); n != len(got) {
				t.Errorf("%s: Count = %d, len(Encode) = %d", c.Name, n, len(got))
			}
			ids32 := enc.AppendIDs([]uint32{7}, text) // appends after what dst holds
			if len(ids32) != len(got)+1 || ids32[0] != 7 {
				t.Errorf("%s: AppendIDs gave %d ids after the one in dst, Encode %d", c.Name, len(ids32)-1, len(got))
			} else {
				for i, id := range got {
					if ids32[i+1] != uint32(id) {
						t.Errorf("%s: AppendIDs differs from Encode at id %d: %d, %d", c.Name, i, ids32[i+1], id)
						break
					}
				}
			}
			if back := enc.Decode(got); !bytes.Equal(back, text) {
				i := commonPrefix(back, text)
				t.Errorf("%s: Decode(Encode(text)) differs from text at byte %d: got %q, want %q", c.Name, i, window(back, i), window(text, i))
			}
			total += len(c.IDs)
		})
	}
	t.Logf("%d cases, %d ids compared with %s", len(g.Cases), total, ref)
}

// TestGoldenUnicodeVersion checks that every character in the golden texts
// is assigned in Go's Unicode tables (unicode.Version). The reference
// library classifies letters and digits with its JavaScript engine's tables,
// which may be newer; a character that Go does not know could then split
// differently for a reason outside the engine.
func TestGoldenUnicodeVersion(t *testing.T) {
	g := loadGolden(t)
	for _, c := range g.Cases {
		text := c.text(t)
		line := 1
		for i := 0; i < len(text); {
			r, n := utf8.DecodeRune(text[i:])
			if r == utf8.RuneError && n == 1 {
				t.Errorf("%s:%d: invalid UTF-8 at byte %d", c.Name, line, i)
			} else if !unicode.In(r, unicode.L, unicode.M, unicode.N, unicode.P, unicode.S, unicode.Z, unicode.C) {
				t.Errorf("%s:%d: U+%04X is not assigned in Unicode %s (Go's tables)", c.Name, line, r, unicode.Version)
			}
			if r == '\n' {
				line++
			}
			i += n
		}
	}
}

// firstMismatch describes the first index where got differs from want, with
// the ids and token texts around it and the text near that byte offset; it
// returns "" when the two are equal.
func firstMismatch(enc *Encoder, text []byte, want, got []int) string {
	i := 0
	for i < len(want) && i < len(got) && want[i] == got[i] {
		i++
	}
	if i == len(want) && i == len(got) {
		return ""
	}
	off := len(enc.Decode(got[:i]))
	var b strings.Builder
	fmt.Fprintf(&b, "first mismatch at id index %d (byte offset %d): want %s, got %s; %d ids wanted, %d got",
		i, off, idAt(want, i), idAt(got, i), len(want), len(got))
	fmt.Fprintf(&b, "\n\twant ...%s", idWindow(enc, want, i))
	fmt.Fprintf(&b, "\n\tgot  ...%s", idWindow(enc, got, i))
	fmt.Fprintf(&b, "\n\ttext near offset: %q", window(text, off))
	return b.String()
}

func idAt(ids []int, i int) string {
	if i >= len(ids) {
		return "end of ids"
	}
	return fmt.Sprint(ids[i])
}

// idWindow renders ids[i-4:i+5] as id:"token" pairs, the one at i marked.
func idWindow(enc *Encoder, ids []int, i int) string {
	var b strings.Builder
	for j := max(0, i-4); j < min(len(ids), i+5); j++ {
		mark := ""
		if j == i {
			mark = ">>"
		}
		fmt.Fprintf(&b, " %s%d:%q", mark, ids[j], enc.Decode(ids[j:j+1]))
	}
	return b.String()
}

func commonPrefix(a, b []byte) int {
	i := 0
	for i < len(a) && i < len(b) && a[i] == b[i] {
		i++
	}
	return i
}

// window returns up to 24 bytes either side of offset off in b.
func window(b []byte, off int) []byte {
	lo, hi := max(0, off-24), min(len(b), off+24)
	if lo > hi {
		lo = hi
	}
	return b[lo:hi]
}
