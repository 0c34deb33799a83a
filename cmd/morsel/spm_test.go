package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

const spmModel = "../../testdata/spm/nfkc-bytes.model"

// Every command and format runs under a SentencePiece model; survey's
// count of a golden text is the reference's (Debian python3-sentencepiece
// 0.1.97, testdata/spm/reference-ids.json: 903 ids for en-gpl3-start.txt
// under nfkc-bytes.model).
func TestSentencePieceCommands(t *testing.T) {
	t.Setenv("MORSEL_CACHE_DIR", t.TempDir())
	corpus := "../../testdata/golden/corpus"
	abs, err := filepath.Abs(spmModel)
	if err != nil {
		t.Fatal(err)
	}
	// A targets file naming the model as its vocabulary (prices invented).
	targets := filepath.Join(t.TempDir(), "morsel.toml")
	toml := "[target.local]\nvocab = \"" + abs + "\"\nwindow = 2048\nprice_in = 1.5\nprice_out = 3\ncurrency = \"EUR\"\n"
	if err := os.WriteFile(targets, []byte(toml), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, args := range [][]string{
		{"pieces", "Hello ﬁle  wörld"},
		{"survey", corpus},
		{"fit", corpus, "--window", "100000"},
		{"ration", corpus, "--window", "400"},
		{"quote", corpus, "--targets", targets},
		{"fragments", corpus},
		{"vocab"},
	} {
		for _, f := range []string{"table", "json", "csv", "md"} {
			if (args[0] == "pieces" || args[0] == "vocab") && f == "csv" || args[0] == "pieces" && f == "md" {
				continue
			}
			full := append(append([]string{}, args...), "--format", f)
			if args[0] != "quote" {
				full = append(full, "--vocab", spmModel)
			}
			out, errs, code := run(t, "", full...)
			if code != 0 || out == "" {
				t.Errorf("%v: exit %d, %d bytes out: %s", full, code, len(out), errs)
			}
		}
	}
	out, _, _ := run(t, "", "survey", filepath.Join(corpus, "en-gpl3-start.txt"), "--vocab", spmModel, "--format", "json")
	var r struct{ Totals struct{ Tokens int } }
	if err := json.Unmarshal([]byte(out), &r); err != nil || r.Totals.Tokens != 903 {
		t.Errorf("survey: %d tokens (%v); the reference gives 903", r.Totals.Tokens, err)
	}
	// The start piece is added to every request, and said so.
	_, errs, _ := run(t, "", "fit", corpus, "--vocab", spmModel, "--window", "100000")
	if !strings.Contains(errs, "adds 1 token(s) to every request (<s>)") {
		t.Errorf("fit does not say it adds <s>: %s", errs)
	}
	out, errs, code := run(t, "", "quote", filepath.Join(corpus, "en-gpl3-start.txt"), "--targets", targets, "--format", "json")
	var q struct {
		Targets []struct {
			InputTokens int `json:"input_tokens"`
		}
	}
	// 903 ids and the start piece: one request of 904 input tokens.
	if err := json.Unmarshal([]byte(out), &q); code != 0 || err != nil || len(q.Targets) != 1 || q.Targets[0].InputTokens != 904 {
		t.Errorf("quote under the targets file's model: exit %d, %v, %s %s", code, err, out, errs)
	}
}

func TestSentencePieceVocab(t *testing.T) {
	t.Setenv("MORSEL_CACHE_DIR", t.TempDir())
	dir := t.TempDir()
	data, err := os.ReadFile(spmModel)
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(dir, "tokenizer.model"), data, 0o644); err != nil {
		t.Fatal(err)
	}
	file, folder := vocabJSON(t, "--vocab", spmModel), vocabJSON(t, "--vocab", dir)
	if file["fingerprint"] != folder["fingerprint"] || file["family"] != "sentencepiece-bpe" || file["tokens"] != 8000.0 || file["byte_fallback"] != true {
		t.Errorf("file %v, folder %v", file, folder)
	}
	// A truncated model: exit 1, the file and the fault named, nothing on
	// standard output.
	bad := filepath.Join(dir, "bad.model")
	if err := os.WriteFile(bad, data[:1000], 0o644); err != nil {
		t.Fatal(err)
	}
	out, errs, code := run(t, "", "survey", "../../testdata/golden/corpus", "--vocab", bad)
	if code != 1 || out != "" || !strings.Contains(errs, "bad.model: not a usable SentencePiece BPE model") || !strings.Contains(errs, "cut short") {
		t.Errorf("truncated model: exit %d, out %q, errors %q", code, out, errs)
	}
}
