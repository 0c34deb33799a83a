package bpe

// Golden ids for tokenizer bundles: the expected values in
// ../testdata/golden/NAME-ids.json come from the reference library
// @huggingface/tokenizers 0.2.0 (npm registry, pinned in
// scripts/golden/package.json), run by scripts/golden/make-golden.js
// --all-bundles over the real bundles of ../testdata/vocab/ (copies of
// ../shared/vocab/, see their SOURCE.md) and the small bundles of
// ../testdata/bundles/. Mode "ordinary" is the library with the special
// added tokens left out (their strings are text: SpecialsAsText here);
// mode "special" has them all (SpecialsHonor).

import (
	"bytes"
	"compress/gzip"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"io"
	"os"
	"path/filepath"
	"slices"
	"testing"
)

// bundleGolden is the layout of NAME-ids.json.
type bundleGolden struct {
	Library      string `json:"library"`
	Version      string `json:"version"`
	Bundle       string `json:"bundle"`
	BundleSHA256 string `json:"bundle_sha256"`
	// SplitPatterns are the patterns of a bundle derived from the one
	// of BundleSHA256 by replacing its pre-tokenizer (see sequenceBundle).
	SplitPatterns []string     `json:"split_patterns"`
	Cases         []goldenCase `json:"cases"`
	TemplateProbe struct {
		Text    string `json:"text"`
		With    []int  `json:"with_template"`
		Without []int  `json:"without_template"`
	} `json:"template_probe"`
}

// readTestBundle returns the bytes of a bundle kept for the tests (a
// .json.gz is unpacked) and of its tokenizer_config.json, if any.
func readTestBundle(t testing.TB, path string) (data, cfg []byte) {
	t.Helper()
	raw, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if filepath.Ext(path) == ".gz" {
		zr, err := gzip.NewReader(bytes.NewReader(raw))
		if err != nil {
			t.Fatal(err)
		}
		if raw, err = io.ReadAll(zr); err != nil {
			t.Fatal(err)
		}
	}
	cfgPath := filepath.Join(filepath.Dir(path), "tokenizer_config.json")
	if b, err := os.ReadFile(cfgPath); err == nil {
		cfg = b
	}
	return raw, cfg
}

// testBundles maps each golden's name to the bundle it was made from.
var testBundles = map[string]string{
	"qwen3":         "../testdata/vocab/qwen3/tokenizer.json.gz",
	"metaspace-32k": "../testdata/vocab/metaspace-32k/tokenizer.json.gz",
}

func loadTestBundle(t testing.TB, name string) (*Vocab, string) {
	t.Helper()
	if name == "cjk-sequence" {
		data, _ := readTestBundle(t, testBundles["qwen3"])
		sum := sha256.Sum256(data)
		return sequenceBundle(t, false), hex.EncodeToString(sum[:])
	}
	path, ok := testBundles[name]
	if !ok {
		path = filepath.Join("../testdata/bundles", name+".json")
	}
	data, cfg := readTestBundle(t, path)
	v, err := ParseBundle(path, data, "tokenizer_config.json", cfg)
	if err != nil {
		t.Fatal(err)
	}
	sum := sha256.Sum256(data)
	return v, hex.EncodeToString(sum[:])
}

func bundleGoldenNames(t *testing.T) []string {
	// The small bundles that have goldens (see SMALL_BUNDLES in
	// make-golden.js), and the derived one (DERIVED there).
	return []string{"qwen3", "metaspace-32k", "words", "cjk-sequence"}
}

// TestBundleGoldenIDs encodes every golden case under every bundle and
// compares the ids with the reference library's, id for id; Count must
// agree with Encode, and the template with the library's.
func TestBundleGoldenIDs(t *testing.T) {
	for _, name := range bundleGoldenNames(t) {
		t.Run(name, func(t *testing.T) {
			path := filepath.Join(goldenDir, name+"-ids.json")
			raw, err := os.ReadFile(path)
			if err != nil {
				t.Fatalf("%v (regenerate with: cd scripts/golden && npm ci && node make-golden.js --all-bundles)", err)
			}
			var g bundleGolden
			if err := json.Unmarshal(raw, &g); err != nil {
				t.Fatalf("%s: %v", path, err)
			}
			v, sum := loadTestBundle(t, name)
			if sum != g.BundleSHA256 {
				t.Fatalf("bundle sha256 %s, golden ids (%s %s) were made from %s", sum, g.Library, g.Version, g.BundleSHA256)
			}
			if g.SplitPatterns != nil && !slices.Equal(g.SplitPatterns, []string{NumberGroupsPattern, KanaHanPattern, LettersMarksPattern}) {
				t.Fatalf("the golden's split patterns %q are not the ones sequenceBundle puts in", g.SplitPatterns)
			}
			plain, err := NewEncoder(v, Options{})
			if err != nil {
				t.Fatal(err)
			}
			honor, err := NewEncoder(v, Options{Specials: SpecialsHonor})
			if err != nil {
				t.Fatal(err)
			}
			match, ids := 0, 0
			for _, c := range g.Cases {
				text := c.text(t)
				enc := plain
				if c.Mode == "special" {
					enc = honor
				}
				got := enc.Encode(text)
				ids += len(c.IDs)
				if !eqInts(got, c.IDs) {
					t.Errorf("%s: %d ids, %s %s gives %d; %s", c.Name, len(got), g.Library, g.Version, len(c.IDs), firstMismatch(enc, text, c.IDs, got))
					continue
				}
				match++
				if n := enc.Count(text); n != len(got) {
					t.Errorf("%s: Count %d, Encode %d", c.Name, n, len(got))
				}
			}
			t.Logf("%d of %d cases (%d ids) equal to %s %s", match, len(g.Cases), ids, g.Library, g.Version)
			if got, want := v.Template(), addedByTemplate(g.TemplateProbe.With, g.TemplateProbe.Without); !eqInts(got, want) {
				t.Errorf("Template() = %v; %s %s adds %v to the ids %v of %q", got, g.Library, g.Version, want, g.TemplateProbe.Without, g.TemplateProbe.Text)
			}
		})
	}
}

// templateOf returns the ids of with that are not the subsequence without:
// what the post-processor added.
func addedByTemplate(with, without []int) []int {
	out := []int{}
	k := 0
	for _, id := range with {
		if k < len(without) && without[k] == id {
			k++
			continue
		}
		out = append(out, id)
	}
	return out
}
