package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func TestPiecesJSONContract(t *testing.T) {
	out, _, code := run(t, "", "pieces", "--format", "json", "hello")
	if code != 0 {
		t.Fatalf("exit %d", code)
	}
	var got struct {
		Tokens int      `json:"tokens"`
		IDs    []int    `json:"ids"`
		Pieces []string `json:"pieces"`
	}
	if err := json.Unmarshal([]byte(out), &got); err != nil {
		t.Fatalf("%v in %s", err, out)
	}
	// "hello" is one token, id 31373 (shared/vocab/gpt2/SOURCE.md).
	if got.Tokens != 1 || len(got.IDs) != 1 || got.IDs[0] != 31373 || got.Pieces[0] != "hello" {
		t.Fatalf("got %+v", got)
	}
}

func TestPiecesTableAndInputs(t *testing.T) {
	out, _, code := run(t, "", "pieces", "Hello", "world")
	if code != 0 || !strings.Contains(out, "15496") || !strings.Contains(out, "␣world") {
		t.Fatalf("exit %d\n%s", code, out)
	}
	// Standard input, with pieces that are not whole UTF-8: "龘" (E9 BE 98)
	// is not one GPT-2 token, so its bytes fall into byte-level pieces.
	out, _, code = run(t, "龘\n", "pieces")
	if code != 0 || !strings.Contains(out, "<E9") || !strings.Contains(out, "␊") {
		t.Fatalf("exit %d\n%s", code, out)
	}
	// Empty input: zero tokens, not an error.
	out, _, code = run(t, "", "pieces", "--format", "json")
	if code != 0 || !strings.Contains(out, `"tokens": 0`) {
		t.Fatalf("empty: exit %d\n%s", code, out)
	}
	// Invalid UTF-8 is encoded as the bytes it is.
	out, _, code = run(t, "\xff\xfe", "pieces", "--format", "json")
	if code != 0 || !strings.Contains(out, `"fffe"`) && !strings.Contains(out, `"ff"`) {
		t.Fatalf("invalid utf-8: exit %d\n%s", code, out)
	}
}

func TestPiecesErrors(t *testing.T) {
	_, errs, code := run(t, "", "pieces", "--file", "no/such/file.txt")
	if code != 1 || !strings.Contains(errs, "no/such/file.txt") {
		t.Fatalf("unreadable file: exit %d, %q", code, errs)
	}
	_, _, code = run(t, "", "pieces", "--format", "xml", "hi")
	if code != 2 {
		t.Fatalf("bad format: exit %d", code)
	}
	_, _, code = run(t, "", "pieces", "--nosuchflag")
	if code != 2 {
		t.Fatalf("bad flag: exit %d", code)
	}
	dir := t.TempDir()
	os.WriteFile(filepath.Join(dir, "vocab.json"), []byte(`{"a": 0, "a": 1}`), 0o644)
	os.WriteFile(filepath.Join(dir, "merges.txt"), []byte("a a\n"), 0o644)
	out, errs, code := run(t, "", "pieces", "--vocab", dir, "hi")
	if code != 1 || out != "" || !strings.Contains(errs, "vocab.json:1") {
		t.Fatalf("malformed vocabulary: exit %d, stdout %q, stderr %q", code, out, errs)
	}
}

func TestPiecesSpecials(t *testing.T) {
	out, _, _ := run(t, "", "pieces", "--format", "json", "<|endoftext|>")
	if !strings.Contains(out, `"tokens": 7`) {
		t.Fatalf("text mode: %s", out)
	}
	out, _, _ = run(t, "", "pieces", "--format", "json", "--specials", "honor", "<|endoftext|>")
	if !strings.Contains(out, `"tokens": 1`) || !strings.Contains(out, "50256") {
		t.Fatalf("honor mode: %s", out)
	}
}
