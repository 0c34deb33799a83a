package corpus

import (
	"bytes"
	"io"
	"testing"
)

// readAll runs Read over data as standard input and checks the invariants
// every reader keeps: exactly one of Doc and Skip per item, a known format,
// and a document text that is never empty.
func readAll(t *testing.T, data []byte, opt Options) {
	opt.Stdin = bytes.NewReader(data)
	opt.StreamAbove = 1 << 10
	err := Read(Input{Path: "-", Size: -1}, opt, func(it Item) error {
		if (it.Doc == nil) == (it.Skip == nil) {
			t.Fatalf("item with both or neither of Doc and Skip")
		}
		if d := it.Doc; d != nil {
			if d.Format != FormatText && d.Format != FormatMarkdown &&
				d.Format != FormatCode && d.Format != FormatHTML && d.Format != FormatJSONL &&
				d.Format != FormatJSON && d.Format != FormatCSV && d.Format != FormatTSV {
				t.Fatalf("unknown format %q", d.Format)
			}
			if d.Stream != nil {
				b, err := io.ReadAll(d.Stream)
				d.Stream.Close()
				if err != nil {
					t.Fatalf("stream: %v", err)
				}
				d.Text = b
			}
			if len(d.Text) == 0 {
				t.Fatalf("empty document at record %d", d.Record)
			}
			if d.Record < 0 {
				t.Fatalf("negative record %d", d.Record)
			}
		} else if it.Skip.Reason == "" {
			t.Fatalf("skip without a reason")
		}
		return nil
	})
	if err != nil {
		t.Fatalf("Read returned %v with a callback that never fails", err)
	}
}

func FuzzJSONL(f *testing.F) {
	for _, s := range []string{
		`{"text": "a"}` + "\n" + `{"text": }`,
		`{"text": [{"role": "user", "content": "hi"}, null, 3]}`,
		`{"meta": {"body": "x"}}`, "\n\n\n", `"just a string"`, `{"text": "\ud800"}`,
	} {
		f.Add([]byte(s), "text")
	}
	f.Add([]byte(`{"meta": [{"body": "x"}]}`), "meta.0.body")
	f.Fuzz(func(t *testing.T, data []byte, field string) {
		readAll(t, data, Options{Format: FormatJSONL, Field: field})
		readAll(t, data, Options{Format: FormatJSON, Field: field})
	})
}

func FuzzCSV(f *testing.F) {
	for _, s := range []string{
		"id,text\n1,a\n2,\"b\r\nc\"\n3,x,y\n", "text\n\"unterminated", "a,text\n\"x\"y,z\n", "\ufefftext\n1\n",
	} {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		readAll(t, data, Options{Format: FormatCSV})
		readAll(t, data, Options{Format: FormatTSV})
	})
}

func FuzzHTML(f *testing.F) {
	for _, s := range []string{
		"<p>a &amp; b</p><script>x</script>", "<pre>  a\n b</pre>", "<template><template></template>",
		"<title>unclosed", "<table><td>a<td>b", "&#xFFFFFFFF; &bogus;",
	} {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		readAll(t, data, Options{Format: FormatHTML})
	})
}

func FuzzSniff(f *testing.F) {
	for _, s := range []string{
		`{"text": "a"}`, "[1,2", "<!doctype html><p>x", "id,text\n1,a\n", "id\ttext\n1\ta\n",
		"plain", "\x1f\x8b\x08\x00", "\x28\xb5\x2f\xfd", "\x00\x01", "\xff\xfe\xfd",
	} {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		switch got := sniff(data, "text"); got {
		case FormatText, FormatJSONL, FormatJSON, FormatHTML, FormatCSV, FormatTSV:
		default:
			t.Fatalf("sniff returned %q", got)
		}
		readAll(t, data, Options{})
	})
}
