package bpe

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// scannerSpans returns the hand scanner's pre-tokens of t.
func scannerSpans(t []byte) []string {
	var out []string
	for i := 0; i < len(t); {
		j := nextGPT2(t, i)
		if j <= i {
			panic("scanner did not advance")
		}
		out = append(out, string(t[i:j]))
		i = j
	}
	return out
}

var gpt2Regex = func() *regexSplitter {
	s, err := newRegexSplitter(GPT2Pattern)
	if err != nil {
		panic(err)
	}
	return s
}()

func regexSpans(t []byte) []string {
	var out []string
	gpt2Regex.spans(t, func(a, b int) { out = append(out, string(t[a:b])) })
	return out
}

func sameSpans(t *testing.T, name string, text []byte) {
	t.Helper()
	got, want := scannerSpans(text), regexSpans(text)
	n := len(got)
	if len(want) < n {
		n = len(want)
	}
	for i := 0; i < n; i++ {
		if got[i] != want[i] {
			t.Fatalf("%s: piece %d: scanner %q, regexp2 %q", name, i, got[i], want[i])
		}
	}
	if len(got) != len(want) {
		t.Fatalf("%s: scanner gives %d pieces, regexp2 %d", name, len(got), len(want))
	}
}

func TestScannerMatchesRegexp(t *testing.T) {
	cases := []string{
		"", "a", " ", "  ", "hello world", "Hello  world", "a\n\nb", "  \nfoo", "x  \t y",
		"I'm you're we've they'll she'd it's don't", "I'M THEY'RE 'S 'sup '' ''s !'s",
		"12345 3.14159 1,000,000 ²³ Ⅻ", "   leading", "trailing   ", "\r\n\r\n", "\t\tx",
		"naïve café, Straße; Ελληνικά; русский", "日本語の文章です。", "हिन्दी पाठ", "مرحبا بالعالم",
		"👩‍👩‍👧 🇩🇪 1️⃣", "a\u00a0b\u2003c\u3000d", "x\u0085y", "a\u200bb", "   \u00a0x",
		"mixed ' quotes 'll 're 've 'd 'm 't",
	}
	for _, c := range cases {
		sameSpans(t, c, []byte(c))
	}
}

// The same on every text of the golden corpus: real prose, code, CJK,
// Devanagari, Arabic, Cyrillic, emoji (see testdata/golden/SOURCES.md).
func TestScannerMatchesRegexpOnCorpus(t *testing.T) {
	files, _ := filepath.Glob("../testdata/golden/corpus/*")
	if len(files) == 0 {
		t.Fatal("no corpus files")
	}
	for _, f := range files {
		data, err := os.ReadFile(f)
		if err != nil {
			t.Fatal(err)
		}
		sameSpans(t, filepath.Base(f), data)
	}
}

func FuzzScannerMatchesRegexp(f *testing.F) {
	for _, s := range []string{"hello world", "I'm  \n x", "a'll 'LL", "１２ ٣ x", "\t\n\v\f\r \u0085\u00a0"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		// Invalid bytes included: regexp2 sees each as U+FFFD, a symbol,
		// and the splitter maps its rune offsets back to bytes.
		sameSpans(t, "fuzz", []byte(s))
	})
}

// Invalid bytes are one "other" character each, as U+FFFD is.
func TestScannerInvalidUTF8(t *testing.T) {
	got := scannerSpans([]byte("ab\xff\xfecd \xe3\x81 x"))
	want := []string{"ab", "\xff\xfe", "cd", " \xe3\x81", " x"}
	if strings.Join(got, "|") != strings.Join(want, "|") {
		t.Fatalf("got %q want %q", got, want)
	}
}
