package spmodel

// The models under ../../testdata/spm/ were trained by scripts/spm/train.sh
// with Debian's spm_train 0.1.97; the settings each test expects are the
// flags that script passes, and the piece layout (<unk>, <s>, </s>, then
// control, user-defined and byte pieces, then merged pieces) is the
// reference trainer's (Debian sentencepiece 0.1.97).

import (
	"encoding/binary"
	"errors"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

const spmDir = "../../testdata/spm"

func load(t testing.TB, name string) (*Model, []byte) {
	t.Helper()
	path := filepath.Join(spmDir, name)
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	m, err := Parse(path, data)
	if err != nil {
		t.Fatal(err)
	}
	return m, data
}

func TestTrainedModels(t *testing.T) {
	for _, c := range []struct {
		file                               string
		rule                               string
		bytes, suffix, digits              bool
		dummy, removeSpace, escape, hasMap bool
		userDefined                        []string
	}{
		{file: "nfkc-bytes.model", rule: "nmt_nfkc", bytes: true, dummy: true, removeSpace: true, escape: true, hasMap: true},
		{file: "identity.model", rule: "identity", dummy: true, removeSpace: true, escape: true},
		{file: "digits.model", rule: "nfkc", bytes: true, digits: true, dummy: true, removeSpace: true, escape: true, hasMap: true},
		{file: "userdef.model", rule: "nmt_nfkc", bytes: true, dummy: true, removeSpace: true, escape: true, hasMap: true,
			userDefined: []string{"<sep>", "<cls>", "[MASK]", "##", "▁morsel", "user defined", "ﬁ", "ＡＢ"}},
		{file: "nodummy.model", rule: "nmt_nfkc_cf", bytes: true, removeSpace: true, escape: true, hasMap: true},
		{file: "keepspace.model", rule: "nfkc_cf", bytes: true, dummy: true, escape: true, hasMap: true},
		{file: "suffix.model", rule: "nmt_nfkc", bytes: true, suffix: true, digits: true, dummy: true, removeSpace: true, escape: true, hasMap: true},
	} {
		m, _ := load(t, c.file)
		n := m.Normalizer
		if n.Name != c.rule || m.ByteFallback != c.bytes || m.TreatWhitespaceAsSuffix != c.suffix || m.SplitDigits != c.digits ||
			n.AddDummyPrefix != c.dummy || n.RemoveExtraWhitespaces != c.removeSpace || n.EscapeWhitespaces != c.escape || (n.Map.Len() > 0) != c.hasMap {
			t.Errorf("%s: rule %q bytes %v suffix %v digits %v dummy %v remove %v escape %v map %d rules; want %+v",
				c.file, n.Name, m.ByteFallback, m.TreatWhitespaceAsSuffix, m.SplitDigits, n.AddDummyPrefix, n.RemoveExtraWhitespaces, n.EscapeWhitespaces, n.Map.Len(), c)
		}
		if m.UnknownID != 0 || m.Pieces[0].Text != "<unk>" || m.Pieces[1] != (Piece{"<s>", 0, Control}) || m.Pieces[2] != (Piece{"</s>", 0, Control}) {
			t.Errorf("%s: first pieces %v, unknown id %d", c.file, m.Pieces[:3], m.UnknownID)
		}
		if id, ok := m.Start(); id != 1 || !ok {
			t.Errorf("%s: Start() = %d, %v; want 1 (<s>)", c.file, id, ok)
		}
		if m.UnknownSurface != " \u2047 " || !strings.HasPrefix(m.Fingerprint, "sha256:") {
			t.Errorf("%s: unknown surface %q, fingerprint %q", c.file, m.UnknownSurface, m.Fingerprint)
		}
		var got []string
		counts := map[Type]int{}
		for _, p := range m.Pieces {
			counts[p.Type]++
			if p.Type == UserDefined {
				got = append(got, p.Text)
			}
		}
		if strings.Join(got, " ") != strings.Join(c.userDefined, " ") {
			t.Errorf("%s: user-defined pieces %q, want %q", c.file, got, c.userDefined)
		}
		if c.bytes && counts[Byte] != 256 || !c.bytes && counts[Byte] != 0 {
			t.Errorf("%s: %d byte pieces", c.file, counts[Byte])
		}
		// Merged pieces score by the order they were learned: -0, -1, -2, ...
		prev := float32(math.Inf(1))
		for id, p := range m.Pieces {
			if p.Type == Normal && id > 3 && !(p.Score < prev) && p.Score != 0 {
				t.Errorf("%s: piece %d %q score %v after %v", c.file, id, p.Text, p.Score, prev)
				break
			}
			if p.Type == Normal && p.Score != 0 {
				prev = p.Score
			}
		}
	}
}

// appendField appends a protobuf field to b.
func appendField(b []byte, num, wire int, v []byte, u uint64) []byte {
	b = binary.AppendUvarint(b, uint64(num<<3|wire))
	switch wire {
	case wireVarint:
		return binary.AppendUvarint(b, u)
	case wireFixed32:
		return binary.LittleEndian.AppendUint32(b, uint32(u))
	}
	return append(binary.AppendUvarint(b, uint64(len(v))), v...)
}

func piece(text string, typ Type) []byte {
	p := appendField(nil, pieceText, wireBytes, []byte(text), 0)
	p = appendField(p, pieceScore, wireFixed32, nil, uint64(math.Float32bits(-1)))
	return appendField(p, pieceType, wireVarint, nil, uint64(typ))
}

func model(kind Kind, pieces ...[]byte) []byte {
	var b []byte
	for _, p := range pieces {
		b = appendField(b, fieldPieces, wireBytes, p, 0)
	}
	trainer := appendField(nil, trainerModelType, wireVarint, nil, uint64(kind))
	return appendField(b, fieldTrainer, wireBytes, trainer, 0)
}

func TestBadModels(t *testing.T) {
	real, err := os.ReadFile(filepath.Join(spmDir, "nfkc-bytes.model"))
	if err != nil {
		t.Fatal(err)
	}
	unk := piece("<unk>", Unknown)
	// A model whose charsmap's trie size says more than the map holds.
	badMap := append(model(BPE, unk), appendField(nil, fieldNormalizer, wireBytes,
		appendField(nil, normCharsmap, wireBytes, []byte{200, 0, 0, 0, 1, 2, 3}, 0), 0)...)
	for _, c := range []struct {
		name, want string
		data       []byte
	}{
		{"empty", "holds no pieces", model(BPE)},
		{"truncated", "cut short", real[:len(real)/3]},
		{"JSON", "wire type", []byte(`{"model": {"type": "BPE"}}`)},
		{"unigram", "Unigram model", model(Unigram, unk)},
		{"no trainer spec (Unigram by default)", "Unigram model", appendField(nil, fieldPieces, wireBytes, unk, 0)},
		{"word", "word model", model(Word, unk)},
		{"char", "char model", model(Char, unk)},
		{"model type 9", "model type 9", model(9, unk)},
		{"piece type 7", "unknown type 7", model(BPE, unk, piece("a", 7))},
		{"empty piece", "piece 1 is empty", model(BPE, unk, piece("", Normal))},
		{"repeated piece", `piece 2 "a" repeats piece 1`, model(BPE, unk, piece("a", Normal), piece("a", UserDefined))},
		{"no unknown", "no piece is the unknown piece", model(BPE, piece("a", Normal))},
		{"two unknowns", "both the unknown piece", model(BPE, unk, piece("<unk2>", Unknown))},
		{"byte piece without fallback", "byte fallback is off", model(BPE, unk, piece("<0x41>", Byte))},
		{"corrupt map", "trie size 200 exceeds", badMap},
		{"score of wire type 0", "wire type 0, want 5", model(BPE, appendField(nil, pieceScore, wireVarint, nil, 1))},
	} {
		_, err := Parse("test.model", c.data)
		if err == nil || !errors.Is(err, ErrFormat) || !strings.Contains(err.Error(), c.want) || !strings.HasPrefix(err.Error(), "test.model: ") {
			t.Errorf("%s: error %v; want test.model: ... %s", c.name, err, c.want)
			continue
		}
		t.Logf("%s: %v", c.name, err)
	}
	if _, err := Load(filepath.Join(spmDir, "missing.model")); err == nil || !strings.Contains(err.Error(), "missing.model") {
		t.Errorf("Load of a missing file: %v", err)
	}
}

func TestByteOf(t *testing.T) {
	for _, c := range []struct {
		in string
		b  byte
		ok bool
	}{
		{"<0x00>", 0, true}, {"<0xFF>", 255, true}, {"<0x0A>", 10, true},
		{"<0x0a>", 0, false}, {"<0x+1>", 0, false}, {"<0x100>", 0, false}, {"0x41", 0, false},
	} {
		if b, ok := ByteOf(c.in); b != c.b || ok != c.ok {
			t.Errorf("ByteOf(%q) = %d, %v", c.in, b, ok)
		}
	}
}

// FuzzParse: any bytes give a model or an error naming the file, never a
// panic; a damaged real model too.
func FuzzParse(f *testing.F) {
	real, err := os.ReadFile(filepath.Join(spmDir, "identity.model"))
	if err != nil {
		f.Fatal(err)
	}
	f.Add(real, uint32(0), byte(0))
	f.Add(real[:200], uint32(7), byte(0x80))
	f.Add(model(BPE, piece("<unk>", Unknown), piece("a", Normal)), uint32(3), byte(1))
	f.Fuzz(func(t *testing.T, data []byte, at uint32, x byte) {
		if len(data) > 0 {
			data = append([]byte(nil), data...)
			data[int(at%uint32(len(data)))] ^= x
		}
		m, err := Parse("fuzz.model", data)
		if err != nil {
			if !strings.HasPrefix(err.Error(), "fuzz.model: ") || !errors.Is(err, ErrFormat) {
				t.Fatalf("error %v", err)
			}
			return
		}
		if len(m.Pieces) == 0 || m.UnknownID < 0 || m.Pieces[m.UnknownID].Type != Unknown {
			t.Fatalf("accepted a model with %d pieces, unknown id %d", len(m.Pieces), m.UnknownID)
		}
	})
}
