// Package reporttest holds what the report packages' tests share: the
// default encoder, the real texts of the repository's test data, hostile
// strings, and checks of rendered HTML pages.
package reporttest

import (
	"bytes"
	"compress/gzip"
	"io"
	"os"
	"path/filepath"
	"runtime"
	"strings"
	"testing"

	"github.com/rivo/uniseg"
	"golang.org/x/net/html"

	"morsel/bpe"
)

// hostile is document text and names that would run or load something if
// they reached the page unescaped.
var Hostile = []string{
	`<script>alert("x")</script>`,
	`<img src=x onerror="alert(1)">`,
	`"><svg onload=alert(2)>`,
	`' onmouseover='alert(3)`,
	`</style><link rel=stylesheet href=https://example.invalid/x.css>`,
	`]]><!-- --></title></svg><iframe src="//example.invalid">`,
}

func Attr(n *html.Node, key string) (string, bool) {
	for _, a := range n.Attr {
		if a.Key == key {
			return a.Val, true
		}
	}
	return "", false
}

func WalkNodes(n *html.Node, fn func(*html.Node)) {
	fn(n)
	for c := n.FirstChild; c != nil; c = c.NextSibling {
		WalkNodes(c, fn)
	}
}

func TextOf(n *html.Node) string {
	var b strings.Builder
	WalkNodes(n, func(c *html.Node) {
		if c.Type == html.TextNode {
			b.WriteString(c.Data)
		}
	})
	return b.String()
}

func InSVG(n *html.Node) bool {
	for p := n.Parent; p != nil; p = p.Parent {
		if p.Type == html.ElementNode && p.Data == "svg" {
			return true
		}
	}
	return false
}

func HasClass(n *html.Node, class string) bool {
	v, _ := Attr(n, "class")
	for _, c := range strings.Fields(v) {
		if c == class {
			return true
		}
	}
	return false
}

// checkSelfContained fails the test for anything in the page that would
// load from outside it or run code: script elements, link elements,
// frames, event-handler attributes, and src, href or url() that leave the
// page.
func CheckSelfContained(t *testing.T, doc *html.Node) {
	t.Helper()
	WalkNodes(doc, func(n *html.Node) {
		if n.Type != html.ElementNode {
			return
		}
		switch n.Data {
		case "script", "link", "iframe", "object", "embed", "img", "base", "frame", "audio", "video", "source":
			t.Errorf("page holds a <%s> element", n.Data)
		case "style":
			if css := TextOf(n); strings.Contains(css, "url(") || strings.Contains(css, "@import") {
				t.Errorf("style sheet loads something: %.80q", css)
			}
		}
		for _, a := range n.Attr {
			k := strings.ToLower(a.Key)
			if strings.HasPrefix(k, "on") {
				t.Errorf("<%s> has event handler %s=%q", n.Data, a.Key, a.Val)
			}
			if k == "style" && strings.Contains(a.Val, "url(") {
				t.Errorf("<%s> style loads %q", n.Data, a.Val)
			}
			if k == "src" || k == "href" || k == "xlink:href" || k == "action" || k == "srcset" {
				if !strings.HasPrefix(a.Val, "#") {
					t.Errorf("<%s %s=%q> leaves the page", n.Data, a.Key, a.Val)
				}
			}
		}
	})
}

// checkPage parses a page, checks what every page must hold (one title,
// heading and footer, the sections asked for with their labels, charts
// with a title, description, axis labels and bars, nothing loaded or run)
// and returns the parsed page.
func CheckPage(t *testing.T, page []byte, sections []string, charts int) *html.Node {
	t.Helper()
	doc, err := html.Parse(bytes.NewReader(page))
	if err != nil {
		t.Fatal(err)
	}
	CheckSelfContained(t, doc)
	ids := map[string]*html.Node{}
	counts := map[string]int{}
	var svgs []*html.Node
	WalkNodes(doc, func(n *html.Node) {
		if n.Type != html.ElementNode {
			return
		}
		if !InSVG(n) {
			counts[n.Data]++
		}
		if id, ok := Attr(n, "id"); ok {
			if ids[id] != nil {
				t.Errorf("id %q used twice", id)
			}
			ids[id] = n
		}
		if n.Data == "svg" {
			svgs = append(svgs, n)
		}
	})
	for _, el := range []string{"title", "h1", "style", "footer", "main"} {
		if counts[el] != 1 {
			t.Errorf("%d <%s> elements, want 1", counts[el], el)
		}
	}
	for _, id := range sections {
		n := ids[id]
		if n == nil || n.Data != "section" {
			t.Errorf("no section %q", id)
			continue
		}
		if l, _ := Attr(n, "aria-labelledby"); ids[l] == nil || strings.TrimSpace(TextOf(ids[l])) == "" {
			t.Errorf("section %q has no heading", id)
		}
	}
	if len(svgs) != charts {
		t.Errorf("%d charts, want %d", len(svgs), charts)
	}
	for _, svg := range svgs {
		refs := strings.Fields(func() string { v, _ := Attr(svg, "aria-labelledby"); return v }())
		if r, _ := Attr(svg, "role"); r != "img" || len(refs) != 2 {
			t.Errorf("chart role %q, labelled by %v", r, refs)
			continue
		}
		for i, want := range []string{"title", "desc"} {
			if n := ids[refs[i]]; n == nil || n.Data != want || strings.TrimSpace(TextOf(n)) == "" {
				t.Errorf("chart label %q is not a non-empty <%s>", refs[i], want)
			}
		}
		parts := map[string]int{}
		WalkNodes(svg, func(n *html.Node) {
			for _, c := range []string{"ctitle", "alabel", "bar", "tick", "rowlabel"} {
				if n.Type == html.ElementNode && HasClass(n, c) {
					parts[c]++
				}
			}
		})
		if parts["ctitle"] != 1 || parts["alabel"] < 1 || parts["bar"] < 1 || parts["tick"] < 2 {
			t.Errorf("chart %v parts %v: want a title, an axis label, ticks and bars", refs, parts)
		}
		if parts["rowlabel"] > 0 && parts["alabel"] != 2 {
			t.Errorf("bar list %v has %d axis labels, want one for the values and one for the rows", refs, parts["alabel"])
		}
	}
	return doc
}

func Encoder(t testing.TB) *bpe.Encoder {
	t.Helper()
	enc, err := bpe.NewEncoder(bpe.Default(), bpe.Options{})
	if err != nil {
		t.Fatal(err)
	}
	return enc
}

// BundleEncoder returns an encoder for one of the real bundles kept in
// testdata/vocab (qwen3, metaspace-32k), parsed from its gzipped file.
func BundleEncoder(t testing.TB, name string) *bpe.Encoder {
	t.Helper()
	path := Testdata(filepath.Join("vocab", name, "tokenizer.json.gz"))
	raw, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	zr, err := gzip.NewReader(bytes.NewReader(raw))
	if err != nil {
		t.Fatal(err)
	}
	data, err := io.ReadAll(zr)
	if err != nil {
		t.Fatal(err)
	}
	v, err := bpe.ParseBundle(path, data, "", nil)
	if err != nil {
		t.Fatal(err)
	}
	enc, err := bpe.NewEncoder(v, bpe.Options{})
	if err != nil {
		t.Fatal(err)
	}
	return enc
}

func RealTexts(t testing.TB) map[string][]byte {
	t.Helper()
	out := map[string][]byte{}
	for _, pat := range []string{Testdata("demo/docs/*"), Testdata("golden/corpus/*")} {
		files, _ := filepath.Glob(pat)
		for _, f := range files {
			if fi, err := os.Stat(f); err != nil || fi.IsDir() {
				continue
			}
			data, err := os.ReadFile(f)
			if err != nil {
				t.Fatal(err)
			}
			out[f] = data
		}
	}
	if len(out) < 10 {
		t.Fatalf("found only %d real texts", len(out))
	}
	return out
}

// Testdata returns the path of rel under the repository's testdata folder,
// wherever the test runs.
func Testdata(rel string) string {
	_, file, _, _ := runtime.Caller(0)
	return filepath.Join(filepath.Dir(file), "..", "..", "..", "testdata", rel)
}

// benchText is the demo corpus's prose files joined, as one text of about
// 200 kB: English with some German, French, Japanese and Russian.
func BenchText(b *testing.B) []byte {
	b.Helper()
	paths, err := filepath.Glob(Testdata("demo/docs/*.[mt][dx]*"))
	if err != nil || len(paths) == 0 {
		b.Fatalf("demo corpus: %v", err)
	}
	var text []byte
	for _, p := range paths {
		t, err := os.ReadFile(p)
		if err != nil {
			b.Fatal(err)
		}
		text = append(append(text, t...), '\n')
	}
	return text
}

const DemoTargets = `# invented example targets
[target.small]
window = 1024
price_in = 0.40
price_out = 1.60
currency = "EUR"
answer_tokens = 200

[target.big]
window = 4_096
price_in = 2.50
price_out = 10.00
currency = "EUR"
answer_ratio = 0.25
batch_discount = 0.5
frame = "frame.txt"
`

// unisegBoundaries returns the boundaries uniseg finds running over the
// whole text with its state carried along.
func UnisegBoundaries(text []byte) []int {
	out := []int{0}
	at, state := 0, -1
	for rest := text; len(rest) > 0; {
		var seg []byte
		seg, rest, state = uniseg.FirstWord(rest, state)
		at += len(seg)
		out = append(out, at)
	}
	return out
}

// segmentSamples mix the characters whose word-break rules interact: the
// ASCII classes, and letters, marks, formats, spaces and symbols beyond.
var SegmentSamples = []string{
	"a.b a..b 3.5 3,5 3;5 a:b a'b 3's don't U.S.A. e.g. x_y _x x_ __ 12_ab",
	"café naïve e\u0301t\u00e9 \u00a0a\u00a0 a\u200db a\u00adb a \u0301b  \u0301",
	"QX-7731-Rb TH9-0044/K (3.5) \"quoted\" 'single' a\r\nb\rc\nd\ve\ff",
	"Кряжево, прошивки; ελληνικά. שלום \"ש\"ש 数据 キリサキ ひらがな 한국어 मरम्मत",
	"🇦🇧🇨 👍🏽 a👍 1\u066b5 ٣٫٤ x\u2060y \u3000\u3000a",
	"", " ", "a", ".", "_", "\u0301", "a ", " a", "a.", ".a", "'s", "3'", "a.\u0301b",
	"fmt.Println(\"a, b\", x.y) // don't: m[k] = 1_000 (\u0301foo bar\u0301 baz)\r\n\tif v, ok := q[\"ש\"]; ok {",
	"\u05d0\"b \"\u05d0 x\" 12,5;6 v2.0.1 __init__ a-b/c?d",
}
