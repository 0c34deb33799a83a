package bpe

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// The hand scanners of scan.go against regexp2 running the patterns they
// stand for, on the same text: the pieces must be the same.

var scannerPatterns = []struct {
	name, pattern string
	next          func([]byte, int) int
}{
	{"gpt2", GPT2Pattern, nextGPT2},
	{"digits", DigitsPattern, nextDigits1},
	{"digit-groups", DigitGroupsPattern, nextDigits3},
	{"number-groups", NumberGroupsPattern, nextNumberGroups},
	{"kana-han", KanaHanPattern, nextKanaHan},
	{"letters-marks", LettersMarksPattern, nextLettersMarks},
}

// regexPieces returns the pieces that re makes of t under Isolated: the
// matches and the text between them.
func regexPieces(re *splitRegex, t []byte) []string {
	ms, err := re.matches(t, nil, nil)
	if err != nil {
		panic(err)
	}
	var out []string
	last := 0
	for i := 0; i < len(ms); i += 2 {
		if ms[i] > last {
			out = append(out, string(t[last:ms[i]]))
		}
		out = append(out, string(t[ms[i]:ms[i+1]]))
		last = ms[i+1]
	}
	if last < len(t) {
		out = append(out, string(t[last:]))
	}
	return out
}

func scanPieces(next func([]byte, int) int, t []byte) []string {
	var out []string
	for i := 0; i < len(t); {
		j := next(t, i)
		if j <= i || j > len(t) {
			panic("scanner did not advance")
		}
		out = append(out, string(t[i:j]))
		i = j
	}
	return out
}

var compiledScanPatterns = func() []*splitRegex {
	var out []*splitRegex
	for _, p := range scannerPatterns {
		re, err := compileSplitRegex(p.pattern)
		if err != nil {
			panic(err)
		}
		out = append(out, re)
	}
	return out
}()

func sameScannerPieces(t *testing.T, name string, text []byte) {
	t.Helper()
	for k, p := range scannerPatterns {
		got, want := scanPieces(p.next, text), regexPieces(compiledScanPatterns[k], text)
		for i := 0; i < min(len(got), len(want)); i++ {
			if got[i] != want[i] {
				t.Fatalf("%s, %s pattern: piece %d: scanner %q, regexp2 %q", name, p.name, i, got[i], want[i])
			}
		}
		if len(got) != len(want) {
			t.Fatalf("%s, %s pattern: scanner gives %d pieces, regexp2 %d", name, p.name, len(got), len(want))
		}
	}
}

var scannerCases = []string{
	"", "a", " ", "  ", "hello world", "Hello  world", "a\n\nb", "  \nfoo", "x  \t y",
	"I'm you're we've they'll she'd it's don't", "I'M THEY'RE 'S 'sup '' ''s !'s 'Ll 'lL 'VE",
	"12345 3.14159 1,000,000 ²³ Ⅻ 1234567", "   leading", "trailing   ", "\r\n\r\n", "\t\tx",
	"naïve café, Straße; Ελληνικά; русский", "日本語の文章です。", "हिन्दी पाठ", "مرحبا بالعالم",
	"👩‍👩‍👧 🇩🇪 1️⃣", "a\u00a0b\u2003c\u3000d", "x\u0085y", "a\u200bb", "   \u00a0x",
	"(hello) [x] {y} --flag ..dots", "a.\n\nb", "x;\r\n\r\n  y", " .\n", "\t.x", "\n x", "a \n\t b",
	"ab\xff\xfecd \xe3\x81 x", "'\xff", " \xffa",
	"東京タワーは333メートル、ひらがなとカタカナ。", "中文，日本語；한국어 text", "\xe4\xb8\xe4\xb8\x80\xe9\xbe\xa5\xe9\xbe\xa6",
	"ゟ゠ヿ㐀\u9fa6\u303f", "e\u0301te\u0301 \u0301a \u0301 \u0301\u0301", "'hello 'héllo $x +=1 ..ab", "a1b 12x ½x ⅫA",
	"\x00a \x00\x01 \x7fb", "\u200bx\u200b\u200b", " ¡hola! «x» — y", "x\t\u0301\n\u0301", " \r\n.\r\n",
}

func TestScannersMatchRegexp(t *testing.T) {
	for _, c := range scannerCases {
		sameScannerPieces(t, c, []byte(c))
	}
}

// The same on every text of the golden corpus (see testdata/golden/SOURCES.md).
func TestScannersMatchRegexpOnCorpus(t *testing.T) {
	files, _ := filepath.Glob("../testdata/golden/corpus/*")
	for _, f := range files {
		data, err := os.ReadFile(f)
		if err != nil {
			t.Fatal(err)
		}
		sameScannerPieces(t, filepath.Base(f), data)
	}
}

func FuzzScannersMatchRegexp(f *testing.F) {
	for _, s := range scannerCases {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		sameScannerPieces(t, "fuzz", []byte(s))
	})
}

func TestKnownScannerNames(t *testing.T) {
	for _, p := range scannerPatterns {
		if next, name := knownScanner(p.pattern); next == nil || name != p.name {
			t.Errorf("knownScanner(%s pattern) = %v, %q", p.name, next != nil, name)
		}
	}
	if next, _ := knownScanner(strings.Replace(DigitsPattern, "+", "*", 1)); next != nil {
		t.Error("a changed pattern is taken for a known one")
	}
	// Line breaks written as themselves, as some bundles have them.
	raw := strings.NewReplacer(`\r`, "\r", `\n`, "\n").Replace(LettersMarksPattern)
	if next, name := knownScanner(raw); next == nil || name != "letters-marks" {
		t.Errorf("knownScanner(letters-marks with literal line breaks) = %v, %q", next != nil, name)
	}
}
