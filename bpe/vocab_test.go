package bpe

import (
	"bytes"
	"errors"
	"os"
	"strconv"
	"strings"
	"testing"
)

// Facts of the GPT-2 vocabulary pair, confirmable on the files themselves
// (see gpt2/SOURCE.md): 50,257 entries, 50,000 merges, <|endoftext|> = 50256,
// a 1,024-token window.
func TestDefaultVocabFacts(t *testing.T) {
	v := Default()
	info := v.Info()
	if info.Size != 50257 || info.Merges != 50000 || info.Window != 1024 {
		t.Fatalf("size %d merges %d window %d; want 50257, 50000, 1024", info.Size, info.Merges, info.Window)
	}
	if len(info.Specials) != 1 || info.Specials[0].ID != 50256 || info.Specials[0].Text != "<|endoftext|>" {
		t.Fatalf("specials %v; want only <|endoftext|> = 50256", info.Specials)
	}
	// ids 0-255 are the byte symbols and id 256+k is merge line k (SOURCE.md).
	for k := 0; k < 50000; k += 997 {
		found := false
		v.merges.each(func(key, rm uint64) {
			if int(rm>>32) == k {
				found = true
				if int(uint32(rm)) != 256+k {
					t.Fatalf("merge %d (%d,%d) makes id %d, want %d", k, key>>32, uint32(key), uint32(rm), 256+k)
				}
			}
		})
		if !found {
			t.Fatalf("no merge of rank %d", k)
		}
	}
}

// The compact embedded form must match the readable files it was made from.
func TestCompactMatchesReadableFiles(t *testing.T) {
	files, err := LoadFiles("gpt2/vocab.json", "gpt2/merges.txt")
	if err != nil {
		t.Fatal(err)
	}
	emb := Default()
	if len(files.tokens) != len(emb.tokens) {
		t.Fatalf("token counts differ: %d vs %d", len(files.tokens), len(emb.tokens))
	}
	for id := range files.tokens {
		if !bytes.Equal(files.tokens[id], emb.tokens[id]) {
			t.Fatalf("token %d differs: %q vs %q", id, files.tokens[id], emb.tokens[id])
		}
	}
	if files.merges.n != emb.merges.n {
		t.Fatalf("merge counts differ")
	}
	files.merges.each(func(k, rm uint64) {
		if got, _ := emb.merges.get(k); got != rm {
			t.Fatalf("merge %x differs", k)
		}
	})
	if files.byteID != emb.byteID {
		t.Fatal("byte ids differ")
	}
	// And rebuilding the compact form gives the embedded bytes exactly.
	files.SetWindow(1024)
	files.SetName("gpt2")
	if !bytes.Equal(files.AppendCompact(nil), gpt2Compact) {
		t.Fatal("gpt2.bin is stale: run go generate ./bpe")
	}
}

func TestLoadDirNames(t *testing.T) {
	dir := t.TempDir()
	vj, _ := os.ReadFile("gpt2/vocab.json")
	mt, _ := os.ReadFile("gpt2/merges.txt")
	os.WriteFile(dir+"/encoder.json", vj, 0o644)
	os.WriteFile(dir+"/vocab.bpe", mt, 0o644)
	v, err := LoadFiles(dir, "")
	if err != nil {
		t.Fatal(err)
	}
	if v.Size() != 50257 {
		t.Fatalf("size %d", v.Size())
	}
	if _, err := LoadDir(t.TempDir()); err == nil || !strings.Contains(err.Error(), "no vocabulary pair") {
		t.Fatalf("empty folder: %v", err)
	}
}

// tinyVocab is a small byte-level vocabulary: the 256 bytes, then ab, abc.
func tinyVocab(extra string) string {
	var b strings.Builder
	b.WriteString("{\n")
	for i := 0; i < 256; i++ {
		b.WriteString(quoteJSON(string(byteToRune[i])))
		b.WriteString(": ")
		b.WriteString(itoa(i))
		b.WriteString(",\n")
	}
	b.WriteString(`"ab": 256,` + "\n" + `"abc": 257` + extra + "\n}")
	return b.String()
}

func quoteJSON(s string) string {
	var b strings.Builder
	b.WriteByte('"')
	for _, r := range s {
		if r == '"' || r == '\\' {
			b.WriteByte('\\')
		}
		b.WriteRune(r)
	}
	b.WriteByte('"')
	return b.String()
}

func itoa(i int) string { return strconv.Itoa(i) }

func TestParseErrors(t *testing.T) {
	good := tinyVocab("")
	cases := []struct {
		name, vocab, merges, want string
	}{
		{"ok", good, "#version: 0.2\r\na b\r\n\r\nab c\r\n", ""},
		{"empty vocab", "", "a b\n", "v.json: empty file"},
		{"empty merges", good, "\n\n", "m.txt: empty file"},
		{"not json", "{\"a\": 0,\n oops}", "a b\n", "v.json:2: not valid JSON"},
		{"not an object", "[1,2]", "a b\n", "expected a JSON object"},
		{"string id", `{"a": "0"}`, "a b\n", "the id must be a number"},
		{"duplicate token", strings.Replace(good, `"abc": 257`, `"ab": 257`, 1), "a b\n", `token "ab" appears twice (first on line 258)`},
		{"duplicate id", strings.Replace(good, `"abc": 257`, `"abc": 256`, 1), "a b\n", "v.json:259: id 256 is given twice (first on line 258)"},
		{"id beyond", strings.Replace(good, `"abc": 257`, `"abc": 9000`, 1), "a b\n", "v.json:259: token \"abc\" has id 9000, beyond the vocabulary of 258 tokens"},
		{"missing byte", strings.Replace(good, `"a": 97,`, `"zz": 97,`, 1), "a b\n", "lacks the one-byte token for byte 0x61"},
		{"merge part missing", good, "a b\nab q9\n", `m.txt:2: merge "ab q9" names "q9", which is not in the vocabulary`},
		{"merge result missing", good, "a b\nb c\n", `m.txt:2: merge "b c" makes "bc", which is not in the vocabulary`},
		{"duplicate merge", good, "a b\nab c\na b\n", `m.txt:3: merge "a b" appears twice (first on line 1)`},
		{"three parts", good, "a b c\n", `m.txt:1: a merge is two tokens separated by one space`},
		{"trailing data", good + " {}", "a b\n", "unexpected data after the vocabulary object"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			v, err := Parse("v.json", []byte(c.vocab), "m.txt", []byte(c.merges))
			if c.want == "" {
				if err != nil {
					t.Fatal(err)
				}
				e, _ := NewEncoder(v, Options{})
				if got := e.Encode([]byte("abc ab")); len(got) != 3 || got[0] != 257 || got[1] != 32 || got[2] != 256 {
					t.Fatalf("encode with tiny vocab: %v", got)
				}
				return
			}
			if err == nil {
				t.Fatalf("no error; want %q", c.want)
			}
			if !strings.Contains(err.Error(), c.want) {
				t.Fatalf("error %q; want it to contain %q", err, c.want)
			}
			if !errors.Is(err, ErrSyntax) {
				t.Fatalf("error %q does not wrap ErrSyntax", err)
			}
		})
	}
}

func TestLoadFilesUnreadable(t *testing.T) {
	_, err := LoadFiles("no/such/vocab.json", "no/such/merges.txt")
	if err == nil || !strings.Contains(err.Error(), "no/such/vocab.json") {
		t.Fatalf("got %v", err)
	}
	if _, err := LoadFiles("gpt2/vocab.json", ""); err == nil || !strings.Contains(err.Error(), "--merges") {
		t.Fatalf("missing merges: %v", err)
	}
}

func FuzzParse(f *testing.F) {
	f.Add([]byte(`{"a": 0, "b": 1}`), []byte("a b\n"))
	f.Add([]byte(tinyVocab("")), []byte("#version: 0.2\na b\nab c\n"))
	f.Add([]byte("{\"\\u0120\": 3}"), []byte("\r\n"))
	f.Fuzz(func(t *testing.T, vj, mt []byte) {
		v, err := Parse("v.json", vj, "m.txt", mt)
		if err != nil {
			return
		}
		e, err := NewEncoder(v, Options{})
		if err != nil {
			t.Fatal(err)
		}
		for _, s := range [][]byte{vj, mt} {
			if got := e.Decode(e.Encode(s)); !bytes.Equal(got, s) {
				t.Fatalf("round trip under a fuzzed vocabulary lost bytes")
			}
		}
	})
}

func FuzzDecodeCompact(f *testing.F) {
	f.Add(gpt2Compact[:200])
	f.Add([]byte(compactMagic + "\x01a\x00\x01\x01a\x00"))
	f.Fuzz(func(t *testing.T, data []byte) {
		DecodeCompact(data) // must not panic
	})
}
