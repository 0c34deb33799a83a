package bpe

// The expected ids in ../testdata/spm/reference-ids.json come from the
// reference, Debian's python3-sentencepiece 0.1.97
// (SentencePieceProcessor.encode, run with /usr/bin/python3), written by
// scripts/spm/reference.py for the models that scripts/spm/train.sh
// trained with Debian's spm_train 0.1.97. The file names the reference
// again; every failure message repeats it.

import (
	"crypto/sha256"
	"encoding/binary"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"slices"
	"sync"
	"testing"

	"morsel/bpe/spmodel"
)

const spmTestdata = "../testdata/spm"

type spmGolden struct {
	Reference string `json:"reference"`
	Models    []struct {
		Model        string `json:"model"`
		Pieces       int    `json:"pieces"`
		PiecesSHA256 string `json:"pieces_sha256"`
		BosID        int    `json:"bos_id"`
		Cases        []struct {
			Name   string `json:"name"`
			Source string `json:"source"`
			Text   string `json:"text"`
			Hex    string `json:"hex"`
			SHA256 string `json:"sha256"`
			IDs    []int  `json:"ids"`
		} `json:"cases"`
	} `json:"models"`
}

var (
	spmGoldenOnce sync.Once
	spmGoldenData *spmGolden
	spmGoldenErr  error
)

func loadSPMGolden(t testing.TB) *spmGolden {
	t.Helper()
	spmGoldenOnce.Do(func() {
		data, err := os.ReadFile(filepath.Join(spmTestdata, "reference-ids.json"))
		if err != nil {
			spmGoldenErr = fmt.Errorf("%v (remake with /usr/bin/python3 scripts/spm/reference.py)", err)
			return
		}
		var g spmGolden
		if err := json.Unmarshal(data, &g); err != nil {
			spmGoldenErr = err
			return
		}
		spmGoldenData = &g
	})
	if spmGoldenErr != nil {
		t.Fatal(spmGoldenErr)
	}
	if spmGoldenData.Reference == "" || len(spmGoldenData.Models) == 0 {
		t.Fatal("reference-ids.json names no reference or holds no models")
	}
	return spmGoldenData
}

// spmCaseText returns a golden case's bytes, checked against the hash the
// ids were made for.
func spmCaseText(t testing.TB, source, name, text, hexText, sum string) []byte {
	t.Helper()
	var b []byte
	switch {
	case source == "corpus":
		var err error
		if b, err = os.ReadFile(filepath.Join(goldenDir, "corpus", name)); err != nil {
			t.Fatal(err)
		}
	case hexText != "":
		var err error
		if b, err = hex.DecodeString(hexText); err != nil {
			t.Fatal(err)
		}
	default:
		b = []byte(text)
	}
	if got := sha256.Sum256(b); hex.EncodeToString(got[:]) != sum {
		t.Fatalf("%s: text changed since the reference ids were made (rerun scripts/spm/reference.py)", name)
	}
	return b
}

func loadSPM(t testing.TB, model string) *Vocab {
	t.Helper()
	v, err := LoadSentencePiece(filepath.Join(spmTestdata, model))
	if err != nil {
		t.Fatal(err)
	}
	return v
}

func TestSentencePieceGolden(t *testing.T) {
	g := loadSPMGolden(t)
	for _, gm := range g.Models {
		t.Run(gm.Model, func(t *testing.T) {
			v := loadSPM(t, gm.Model)
			enc, err := NewEncoder(v, Options{})
			if err != nil {
				t.Fatal(err)
			}
			same := 0
			for _, c := range gm.Cases {
				text := spmCaseText(t, c.Source, c.Name, c.Text, c.Hex, c.SHA256)
				got := enc.Encode(text)
				want := c.IDs
				if want == nil {
					want = []int{}
				}
				if got == nil {
					got = []int{}
				}
				if !slices.Equal(got, want) {
					i := 0
					for i < len(got) && i < len(want) && got[i] == want[i] {
						i++
					}
					t.Errorf("%s: %d ids, reference (%s) %d; first difference at %d: got %v, want %v",
						c.Name, len(got), g.Reference, len(want), i, got[i:min(i+8, len(got))], want[i:min(i+8, len(want))])
					continue
				}
				if n := enc.Count(text); n != len(want) {
					t.Errorf("%s: Count %d, reference (%s) %d ids", c.Name, n, g.Reference, len(want))
					continue
				}
				same++
			}
			t.Logf("%s: %d of %d texts id for id equal to the reference (%s)", gm.Model, same, len(gm.Cases), g.Reference)
		})
	}
}

// TestSentencePiecePieces holds the model reader's pieces to the
// reference module's view of them (text, score, type; the module shows
// user-defined pieces as normal ones).
func TestSentencePiecePieces(t *testing.T) {
	g := loadSPMGolden(t)
	for _, gm := range g.Models {
		m, err := spmodel.Load(filepath.Join(spmTestdata, gm.Model))
		if err != nil {
			t.Fatal(err)
		}
		h := sha256.New()
		for _, p := range m.Pieces {
			typ := p.Type
			if typ == spmodel.UserDefined {
				typ = spmodel.Normal
			}
			h.Write([]byte(p.Text + "\t"))
			h.Write(binary.LittleEndian.AppendUint32(nil, math.Float32bits(p.Score)))
			h.Write([]byte{byte(typ), '\n'})
		}
		if got := hex.EncodeToString(h.Sum(nil)); len(m.Pieces) != gm.Pieces || got != gm.PiecesSHA256 {
			t.Errorf("%s: %d pieces, digest %s; reference (%s) %d pieces, %s", gm.Model, len(m.Pieces), got, g.Reference, gm.Pieces, gm.PiecesSHA256)
		}
		start, ok := m.Start()
		if !ok {
			start = -1
		}
		if start != gm.BosID {
			t.Errorf("%s: start piece %d; reference (%s) bos_id %d", gm.Model, start, g.Reference, gm.BosID)
		}
	}
}
