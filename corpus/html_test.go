package corpus

import (
	"strings"
	"testing"
)

func TestHTMLVisibleText(t *testing.T) {
	tests := []struct{ in, want string }{
		{`<!DOCTYPE html><html><head><title>Tab name</title><style>p{color:red}</style></head>` +
			`<body><h1>Dock  rules</h1><p>No running &amp; no
			diving &lt;ever&gt;.</p><script>var x = "<p>hidden</p>";</script><p>Caf&eacute; &#x263A;</p></body></html>`,
			"Dock rules\nNo running & no diving <ever>.\nCafé ☺"},
		{`<ul><li>one</li><li>two<br>three</li></ul>`, "one\ntwo\nthree"},
		{`<pre>  keep
   spacing</pre><p>after</p>`, "  keep\n   spacing\nafter"},
		{`<table><tr><td>a</td><td>b</td></tr><tr><th>c</th></tr></table>`, "a b\nc"},
		{`<p>in<b>line</b> <i>words</i></p><template><p>never</p></template><noscript>off</noscript>`, "inline words"},
	}
	for _, tt := range tests {
		got, err := visibleText(strings.NewReader(tt.in), 1<<20, 1<<20)
		if err != nil {
			t.Fatalf("visibleText(%q): %v", tt.in, err)
		}
		if string(got) != tt.want {
			t.Errorf("visibleText(%q)\n got %q\nwant %q", tt.in, got, tt.want)
		}
	}
	check(t, show(t, "", readBytes(t, []byte(`<html><script>only()</script></html>`), Options{Format: FormatHTML})),
		[]string{`-:0 ~empty`})
}
