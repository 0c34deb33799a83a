package measure

import (
	"bufio"
	"os"
	"strconv"
	"strings"
	"testing"
)

// TestScriptOfAgainstScripts checks the script classes against a sample of
// Scripts.txt, Unicode 15.0.0 (testdata/unicode/Scripts-15.0.0-sample.txt,
// whose General Category comments give the Nd code points): the first,
// middle and last code point of every range.
func TestScriptOfAgainstScripts(t *testing.T) {
	want := map[string]Script{
		"Latin": Latin, "Cyrillic": Cyrillic, "Greek": Greek, "Arabic": Arabic, "Hebrew": Hebrew,
		"Devanagari": Devanagari, "Han": Han, "Hiragana": Kana, "Katakana": Kana, "Hangul": Hangul,
	}
	f, err := os.Open("../../testdata/unicode/Scripts-15.0.0-sample.txt")
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	ranges, seen := 0, map[Script]bool{}
	for line := 1; sc.Scan(); line++ {
		l := sc.Text()
		if l == "" || l[0] == '#' {
			continue
		}
		data, comment, _ := strings.Cut(l, "#")
		cps, script, ok := strings.Cut(data, ";")
		if !ok {
			t.Fatalf("line %d: %q", line, l)
		}
		lo, hi, isRange := strings.Cut(strings.TrimSpace(cps), "..")
		if !isRange {
			hi = lo
		}
		a, err1 := strconv.ParseUint(lo, 16, 32)
		b, err2 := strconv.ParseUint(hi, 16, 32)
		if err1 != nil || err2 != nil {
			t.Fatalf("line %d: %q", line, l)
		}
		exp, named := want[strings.TrimSpace(script)]
		if !named {
			exp = OtherScript
		}
		if strings.Fields(comment)[0] == "Nd" {
			exp = Digits
		}
		for _, r := range []rune{rune(a), rune((a + b) / 2), rune(b)} {
			if got := ScriptOf(r); got != exp {
				t.Errorf("line %d: ScriptOf(U+%04X) = %v, want %v (%s)", line, r, got, exp, strings.TrimSpace(script))
			}
		}
		ranges++
		seen[exp] = true
	}
	if ranges < 500 || len(seen) != int(NumScripts) {
		t.Fatalf("checked %d ranges covering %d classes; the sample is not what it should be", ranges, len(seen))
	}
}

func TestWordScript(t *testing.T) {
	for _, c := range []struct {
		word string
		want Script
	}{
		{"fluvantrazine", Latin},
		{"TH9", Latin},
		{"7731", Digits},
		{"٣٤", Digits}, // ARABIC-INDIC DIGIT THREE, FOUR: Nd (Scripts.txt 15.0.0 lists them as Arabic)
		{"ーセル", Kana},  // U+30FC is Common; the Katakana letters decide
		{"прошивки", Cyrillic},
		{"数据", Han},
		{"한국어", Hangul},
		{"ελληνικά", Greek},
		{"שלום", Hebrew},
		{"मरम्मत", Devanagari},
		{"สวัสดี", OtherScript}, // Thai
		{"_", OtherScript},
	} {
		if got := WordScript([]byte(c.word)); got != c.want {
			t.Errorf("WordScript(%q) = %v, want %v", c.word, got, c.want)
		}
	}
}
