package corpus

import (
	"bytes"
	"encoding/json"
	"strings"
	"testing"
)

// referenceText is the text of a record by the package comment's rules,
// found with Go's encoding/json alone: the way records were read before
// findScanner, kept here as the reference it must agree with.
func referenceText(rec []byte, path []string) (text []byte, reason string, valid bool) {
	if !json.Valid(rec) {
		return nil, "", false
	}
	text, reason, msg := fieldText(rec, path)
	return text, reason + ": " + msg, true
}

// scannedText is the text of a record as record finds it.
func scannedText(rec []byte, path []string) (text []byte, reason string, valid bool) {
	text, reason, msg, valid, _ := recordText(rec, newJSONPath(path))
	if !valid {
		return nil, "", false
	}
	return text, reason + ": " + msg, valid
}

func TestFindValueAgreesWithEncodingJSON(t *testing.T) {
	for _, c := range []struct{ rec, path string }{
		{`{"text": "plain"}`, "text"},
		{`{"text": "esc\n\t\"\\\/\u00e9\ud83d\ude00"}`, "text"},
		{`{"text": "lone \ud800 surrogate", "x": 1}`, "text"},
		{"{\"text\": \"bad \xff utf8\"}", "text"},
		{`{"text": "first", "text": "last wins"}`, "text"},
		{`{"t\u0065xt": "escaped key"}`, "text"},
		{`{"meta": {"body": "deep"}}`, "meta.body"},
		{`{"turns": [{"text": "a"}, {"text": "b"}]}`, "turns.1.text"},
		{`{"turns": [{"text": "a"}]}`, "turns.+0.text"},
		{`"a record that is a string"`, "text"},
		{`{"text": ""}`, "text"},
		{`{"text": null}`, "text"},
		{`{"text": 12}`, "text"},
		{`{"other": "x"}`, "text"},
		{`[1, 2]`, "text"},
		{`{"text": "a",}`, "text"},
		{`{"text": 01}`, "text"},
		{`{"text": 1.}`, "text"},
		{`{"text": -}`, "text"},
		{`{"text": 1e+}`, "text"},
		{`{"text": "\x"}`, "text"},
		{"{\"text\": \"tab\tinside\"}", "text"},
		{`{"text": "a"} x`, "text"},
		{`{"text": tru}`, "text"},
		{strings.Repeat("[", 10000) + strings.Repeat("]", 10000), "text"},
		{strings.Repeat("[", 10001) + strings.Repeat("]", 10001), "text"},
	} {
		path := strings.Split(c.path, ".")
		wt, wr, wv := referenceText([]byte(c.rec), path)
		gt, gr, gv := scannedText([]byte(c.rec), path)
		if wv != gv || wr != gr || !bytes.Equal(wt, gt) {
			name := c.rec
			if len(name) > 40 {
				name = name[:40]
			}
			t.Errorf("%s at %s: got %q %q valid %v, encoding/json gives %q %q valid %v", name, c.path, gt, gr, gv, wt, wr, wv)
		}
	}
}

// FuzzFindValue checks findScanner against encoding/json: the same records
// are valid, and the same text or reason comes out of each.
func FuzzFindValue(f *testing.F) {
	for _, s := range []string{
		`{"text": "a"}`, `{"text": "\u00e9\ud800x"}`, `{"a": [1, {"text": "b"}]}`, `"s"`,
		`{"text": [{"role": "user", "content": "hi"}]}`, `{"text": 1e5}`, "{\"text\": \"\xff\"}",
	} {
		f.Add([]byte(s), "text")
	}
	f.Add([]byte(`{"a": [1, {"text": "b"}]}`), "a.1.text")
	f.Fuzz(func(t *testing.T, rec []byte, field string) {
		rec = bytes.TrimSpace(rec)
		if len(rec) == 0 {
			return
		}
		path := strings.Split(field, ".")
		wt, wr, wv := referenceText(rec, path)
		gt, gr, gv := scannedText(rec, path)
		if wv != gv || wr != gr || !bytes.Equal(wt, gt) {
			t.Fatalf("%q at %q: got %q %q valid %v, encoding/json gives %q %q valid %v", rec, field, gt, gr, gv, wt, wr, wv)
		}
	})
}
