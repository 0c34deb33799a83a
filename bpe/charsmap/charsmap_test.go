package charsmap

// The expected values in ../../testdata/spm/charsmap-cases.json come from
// the reference, Debian's python3-sentencepiece 0.1.97 (with
// spm_normalize --decompile from Debian's sentencepiece 0.1.97 for the
// rule lists), recorded by scripts/spm/normalize_cases.py from the maps of
// the models in ../../testdata/spm/, which scripts/spm/train.sh trained
// with Debian's spm_train 0.1.97.

import (
	"bufio"
	"bytes"
	"crypto/sha256"
	"encoding/binary"
	"encoding/hex"
	"encoding/json"
	"errors"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"sync"
	"testing"
)

const spmDir = "../../testdata/spm"

type casesFile struct {
	Reference string `json:"reference"`
	Maps      []struct {
		Model       string `json:"model"`
		Rules       int    `json:"rules"`
		RulesSHA256 string `json:"rules_sha256"`
		Cases       []struct {
			In     string `json:"in"`
			InHex  string `json:"in_hex"`
			Out    string `json:"out"`
			OutHex string `json:"out_hex"`
		} `json:"cases"`
	} `json:"maps"`
}

func loadCases(t testing.TB) *casesFile {
	t.Helper()
	data, err := os.ReadFile(filepath.Join(spmDir, "charsmap-cases.json"))
	if err != nil {
		t.Fatalf("reading reference cases: %v (remake with /usr/bin/python3 scripts/spm/normalize_cases.py)", err)
	}
	var f casesFile
	if err := json.Unmarshal(data, &f); err != nil {
		t.Fatal(err)
	}
	if f.Reference == "" || len(f.Maps) == 0 {
		t.Fatal("charsmap-cases.json names no reference or holds no maps")
	}
	return &f
}

func unhex(t testing.TB, s, h string) []byte {
	if h == "" {
		return []byte(s)
	}
	b, err := hex.DecodeString(h)
	if err != nil {
		t.Fatal(err)
	}
	return b
}

// modelCharsmap digs NormalizerSpec.precompiled_charsmap (ModelProto field
// 3, then field 2) out of a model file: enough protobuf for these tests.
func modelCharsmap(t testing.TB, name string) []byte {
	t.Helper()
	data, err := os.ReadFile(filepath.Join(spmDir, name))
	if err != nil {
		t.Fatal(err)
	}
	field := func(msg []byte, want uint64) []byte {
		for len(msg) > 0 {
			key, n := binary.Uvarint(msg)
			msg = msg[n:]
			switch key & 7 {
			case 0:
				_, n = binary.Uvarint(msg)
				msg = msg[n:]
			case 1:
				msg = msg[8:]
			case 5:
				msg = msg[4:]
			case 2:
				l, n := binary.Uvarint(msg)
				body := msg[n : n+int(l)]
				msg = msg[n+int(l):]
				if key>>3 == want {
					return body
				}
			default:
				t.Fatalf("%s: wire type %d", name, key&7)
			}
		}
		return nil
	}
	return field(field(data, 3), 2)
}

var (
	mapsOnce sync.Once
	maps     map[string]*Map
	mapsErr  error
)

// testMaps parses the map of every model the cases name, once.
func testMaps(t testing.TB, f *casesFile) map[string]*Map {
	mapsOnce.Do(func() {
		maps = map[string]*Map{}
		for _, m := range f.Maps {
			cm, err := Parse(modelCharsmap(t, m.Model))
			if err != nil {
				mapsErr = err
				return
			}
			maps[m.Model] = cm
		}
	})
	if mapsErr != nil {
		t.Fatal(mapsErr)
	}
	return maps
}

func TestRulesMatchReferenceDecompile(t *testing.T) {
	f := loadCases(t)
	for _, want := range f.Maps {
		m := testMaps(t, f)[want.Model]
		var lines [][]byte
		m.each(func(key, repl []byte) {
			lines = append(lines, slices.Concat(key, []byte("\t"), repl, []byte("\n")))
		})
		slices.SortFunc(lines, bytes.Compare)
		sum := sha256.Sum256(bytes.Join(lines, nil))
		// Expected: spm_normalize --decompile, Debian sentencepiece 0.1.97.
		if len(lines) != want.Rules || m.Len() != want.Rules || hex.EncodeToString(sum[:]) != want.RulesSHA256 {
			t.Errorf("%s: %d rules (Len %d), sha256 %x; reference (%s) lists %d, sha256 %s",
				want.Model, len(lines), m.Len(), sum, f.Reference, want.Rules, want.RulesSHA256)
		}
	}
}

// KeysHold, from the walk that checks the trie, agrees with the keys each
// lists.
func TestKeysHoldMatchesKeys(t *testing.T) {
	f := loadCases(t)
	for _, want := range f.Maps {
		m := testMaps(t, f)[want.Model]
		var held [256]bool
		m.each(func(key, _ []byte) {
			for _, b := range key {
				held[b] = true
			}
		})
		for b := range 256 {
			if m.KeysHold(byte(b)) != held[b] {
				t.Errorf("%s: KeysHold(%#x) = %v, the keys say %v", want.Model, b, m.KeysHold(byte(b)), held[b])
			}
		}
		// NFKC folds characters such as U+2122 (0xe2 0x84 0xa2) to others
		// (Unicode compatibility mappings, from memory).
		if !held[0xe2] && m.Len() > 1000 {
			t.Errorf("%s: no key holds 0xe2 among %d rules", want.Model, m.Len())
		}
	}
}

func TestNormalizeMatchesReference(t *testing.T) {
	f := loadCases(t)
	for _, mc := range f.Maps {
		m := testMaps(t, f)[mc.Model]
		bad := 0
		for i, c := range mc.Cases {
			in, want := unhex(t, c.In, c.InHex), unhex(t, c.Out, c.OutHex)
			// Expected: the reference's normalization (see the file comment).
			if got := m.Normalize(nil, in); !bytes.Equal(got, want) {
				if bad++; bad <= 5 {
					t.Errorf("%s case %d: Normalize(%q) = %q; reference (%s) gives %q", mc.Model, i, in, got, f.Reference, want)
				}
			}
		}
		t.Logf("%s: %d of %d cases equal to the reference (%s)", mc.Model, len(mc.Cases)-bad, len(mc.Cases), f.Reference)
	}
}

func TestMatch(t *testing.T) {
	m := testMaps(t, loadCases(t))["nfkc-bytes.model"]
	for _, c := range []struct {
		in, repl string
		n        int
	}{
		// Expected values: the nmt_nfkc rules, as the reference's
		// decompiled list shows them (spm_normalize --decompile, Debian
		// sentencepiece 0.1.97).
		{"ﬁx", "fi", 3},      // U+FB01 LATIN SMALL LIGATURE FI
		{"\u3000a", " ", 3},  // IDEOGRAPHIC SPACE
		{"\x05b", "", 1},     // a control character is deleted
		{"\tb", " ", 1},      // tab becomes a space
		{"abc", "", 0},       // no rule for plain ASCII
		{"", "", 0},          //
		{"e\u0301x", "é", 3}, // e + COMBINING ACUTE composes
		{"①", "1", 3},        // CIRCLED DIGIT ONE
	} {
		repl, n := m.Match([]byte(c.in))
		if string(repl) != c.repl || n != c.n {
			t.Errorf("Match(%q) = %q, %d; want %q, %d", c.in, repl, n, c.repl, c.n)
		}
	}
}

func TestEmptyMap(t *testing.T) {
	m, err := Parse(nil)
	if err != nil || m.Len() != 0 {
		t.Fatalf("Parse(nil) = %v, %v", m, err)
	}
	// Without rules only invalid UTF-8 changes, one U+FFFD a byte, as the
	// reference's normalizer does (identity-normalized model, Debian
	// sentencepiece 0.1.97; the same cases appear in the model tests).
	if got := m.Normalize(nil, []byte("a\xffb\xed\xa0\x80ﬁ")); string(got) != "a\uFFFDb\uFFFD\uFFFD\uFFFDﬁ" {
		t.Errorf("Normalize = %q", got)
	}
}

func TestParseCorrupt(t *testing.T) {
	real := modelCharsmap(t, "nfkc-bytes.model")
	size := binary.LittleEndian.Uint32(real)
	withSize := func(n uint32, rest []byte) []byte {
		return append(binary.LittleEndian.AppendUint32(nil, n), rest...)
	}
	units := func(us ...uint32) []byte {
		var b []byte
		for _, u := range us {
			b = binary.LittleEndian.AppendUint32(b, u)
		}
		return b
	}
	// Unit 0 is the root with its children at 0; unit 1 holds byte 1 and
	// points back to 0.
	loop := withSize(8, append(units(0, 1<<10|1), 0))
	// Unit 1 holds byte 1 and a key end whose value unit, 2, names offset
	// 1000 of a one-byte pool.
	pastPool := withSize(12, append(units(0, 3<<10|leafBit|1, valueBit|1000), 0))
	for _, c := range []struct {
		name string
		blob []byte
	}{
		{"too short", []byte{1, 2, 3}},
		{"only the size", withSize(4, nil)},
		{"size past the end", withSize(1000, make([]byte, 10))},
		{"empty trie", withSize(0, []byte("x\x00"))},
		{"size not whole units", withSize(6, make([]byte, 10))},
		{"truncated", real[:len(real)/2]},
		{"no pool", real[:4+size]},
		{"pool without its last NUL", real[:len(real)-1]},
		{"root outside", withSize(4, []byte{0xff, 0xff, 0xff, 0x7f, 0})},
		{"loop", loop},
		{"replacement past the pool", pastPool},
	} {
		_, err := Parse(c.blob)
		if !errors.Is(err, ErrCorrupt) {
			t.Errorf("%s: Parse error %v, want one wrapping ErrCorrupt", c.name, err)
			continue
		}
		t.Logf("%s: %v", c.name, err)
	}
}

// oracle is a plain longest-prefix normalizer over the rules as a Go map.
type oracle struct {
	rules  map[string][]byte
	maxKey int
}

func newOracle(m *Map) *oracle {
	o := &oracle{rules: map[string][]byte{}}
	m.each(func(key, repl []byte) {
		o.rules[string(key)] = bytes.Clone(repl)
		o.maxKey = max(o.maxKey, len(key))
	})
	return o
}

func (o *oracle) normalize(src []byte) []byte {
	var out []byte
	for i := 0; i < len(src); {
		n := 0
		for l := min(o.maxKey, len(src)-i); l > 0; l-- {
			if r, ok := o.rules[string(src[i:i+l])]; ok {
				out, n = append(out, r...), l
				break
			}
		}
		if n == 0 {
			size := runeLen(src[i:])
			if size == 0 {
				out, n = append(out, "\uFFFD"...), 1
			} else {
				out, n = append(out, src[i:i+size]...), size
			}
		}
		i += n
	}
	return out
}

// runeLen returns the length of the valid UTF-8 character at the start of
// b, or 0, by converting through a string and back.
func runeLen(b []byte) int {
	for n := 1; n <= 4 && n <= len(b); n++ {
		rs := []rune(string(b[:n]))
		if len(rs) == 1 && string(rs) == string(b[:n]) {
			return n
		}
	}
	return 0
}

// A child process serving the reference's normalization, for fuzzing
// against it live: set MORSEL_SPM_PYTHON to /usr/bin/python3 (with Debian's
// python3-sentencepiece installed).
type liveReference struct {
	cmd *exec.Cmd
	in  io.WriteCloser
	out *bufio.Reader
}

func startReference(t testing.TB, model string) *liveReference {
	py := os.Getenv("MORSEL_SPM_PYTHON")
	if py == "" {
		return nil
	}
	cmd := exec.Command(py, "../../scripts/spm/normalize_cases.py", "--serve", filepath.Join(spmDir, model))
	in, err := cmd.StdinPipe()
	if err != nil {
		t.Fatal(err)
	}
	out, err := cmd.StdoutPipe()
	if err != nil {
		t.Fatal(err)
	}
	cmd.Stderr = os.Stderr
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	return &liveReference{cmd: cmd, in: in, out: bufio.NewReader(out)}
}

func (r *liveReference) normalize(t testing.TB, text []byte) []byte {
	if _, err := r.in.Write(append(binary.LittleEndian.AppendUint32(nil, uint32(len(text))), text...)); err != nil {
		t.Fatal(err)
	}
	var head [4]byte
	if _, err := io.ReadFull(r.out, head[:]); err != nil {
		t.Fatal(err)
	}
	out := make([]byte, binary.LittleEndian.Uint32(head[:]))
	if _, err := io.ReadFull(r.out, out); err != nil {
		t.Fatal(err)
	}
	return out
}

var (
	oracleOnce sync.Once
	oracleNFKC *oracle
)

// FuzzNormalize holds Normalize under the nmt_nfkc map equal to a plain
// longest-prefix normalizer over the same rules, and, when MORSEL_SPM_PYTHON
// names a Python with the reference module, to the reference itself. The
// seeds are the recorded reference cases of every map.
func FuzzNormalize(f *testing.F) {
	cases := loadCases(f)
	for _, mc := range cases.Maps {
		for _, c := range mc.Cases {
			f.Add(unhex(f, c.In, c.InHex))
		}
	}
	m := testMaps(f, cases)["nfkc-bytes.model"]
	oracleOnce.Do(func() { oracleNFKC = newOracle(m) })
	live := startReference(f, "nfkc-bytes.model")
	f.Fuzz(func(t *testing.T, text []byte) {
		got := m.Normalize(nil, text)
		if want := oracleNFKC.normalize(text); !bytes.Equal(got, want) {
			t.Fatalf("Normalize(%q) = %q; the plain normalizer over the same rules gives %q", text, got, want)
		}
		if live != nil {
			if want := live.normalize(t, text); !bytes.Equal(got, want) {
				t.Fatalf("Normalize(%q) = %q; the reference (%s) gives %q", text, got, cases.Reference, want)
			}
		}
	})
}

// FuzzParse feeds Parse damaged maps: it must fail with ErrCorrupt or give
// a map whose every operation stays inside it.
func FuzzParse(f *testing.F) {
	real := modelCharsmap(f, "nfkc-bytes.model")
	f.Add(real[:4096], uint16(0), byte(0))
	f.Add(real, uint16(100), byte(0x55))
	f.Add([]byte{8, 0, 0, 0, 0, 0, 0, 0, 1, 4, 0, 0, 0}, uint16(9), byte(1))
	f.Fuzz(func(t *testing.T, blob []byte, at uint16, x byte) {
		blob = bytes.Clone(blob)
		if len(blob) > 0 {
			blob[int(at)%len(blob)] ^= x
		}
		m, err := Parse(blob)
		if err != nil {
			if !errors.Is(err, ErrCorrupt) {
				t.Fatalf("error %v does not wrap ErrCorrupt", err)
			}
			return
		}
		m.Normalize(nil, blob)
		if m.Len() > 1000 {
			return // walking every rule of a real map is too slow for fuzzing
		}
		m.each(func(key, repl []byte) {
			if r, n := m.Match(key); n != len(key) || !bytes.Equal(r, repl) {
				t.Fatalf("Match(%q) = %q, %d; the rule says %q", key, r, n, repl)
			}
		})
	})
}

func BenchmarkParse(b *testing.B) {
	blob := modelCharsmap(b, "nfkc-bytes.model")
	for b.Loop() {
		if _, err := Parse(blob); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkNormalize(b *testing.B) {
	m := testMaps(b, loadCases(b))["nfkc-bytes.model"]
	text, err := os.ReadFile("../../testdata/golden/corpus/en-gpl3-start.txt")
	if err != nil {
		b.Fatal(err)
	}
	ja, err := os.ReadFile("../../testdata/golden/corpus/ja-sed.po.txt")
	if err != nil {
		b.Fatal(err)
	}
	for _, c := range []struct {
		name string
		text []byte
	}{{"english", text}, {"japanese", ja}} {
		b.Run(c.name, func(b *testing.B) {
			var dst []byte
			b.SetBytes(int64(len(c.text)))
			for b.Loop() {
				dst = m.Normalize(dst[:0], c.text)
			}
		})
	}
}
