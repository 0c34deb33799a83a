package render

import (
	"html/template"
	"regexp"
	"strconv"
	"strings"
	"unicode/utf8"

	"morsel/internal/screen"
)

// srcShown is the most characters of a source that an HTML table prints;
// a longer one is cut in the middle, whole in its title.
const srcShown = 64

// fitPage readies a page's text for the boxes it lands in: a card figure
// too long for its card rounded (the exact figure in its title), a table
// caption that repeats its section's heading dropped, and sources shown
// relative to the view's Base and cut in the middle when long.
func fitPage(p *Page, v View) {
	for i := range p.Sections {
		sec := &p.Sections[i]
		for k := range sec.Cards {
			compactCard(&sec.Cards[k])
		}
		for k := range sec.Tables {
			t := &sec.Tables[k]
			if t.Title == sec.Heading {
				t.Title = ""
			}
			for _, row := range t.Rows {
				for c := range row {
					if !row[c].Src {
						continue
					}
					whole := screen.Rel(row[c].Text, v.Base)
					row[c].Text = screen.CutMiddle(whole, srcShown)
					if row[c].Text != whole && row[c].Tip == "" {
						row[c].Tip = whole
					}
				}
			}
		}
	}
}

// compactCard rounds a card's whole number of more than seven digits
// (103,090,277 becomes 103.1 M), keeping the exact figure.
func compactCard(f *Fact) {
	digits := strings.ReplaceAll(f.Value, ",", "")
	if len(digits) <= 7 {
		return
	}
	n, err := strconv.ParseInt(digits, 10, 64)
	if err != nil {
		return
	}
	f.Exact = f.Value
	f.Value = screen.Compact(n)
}

// flagName finds command-line flags in running text.
var flagName = regexp.MustCompile(`--[a-z][a-z0-9-]*`)

// prose escapes text for a paragraph and sets each flag it names in code
// that does not break at its hyphens.
func prose(s string) template.HTML {
	var b strings.Builder
	last := 0
	for _, m := range flagName.FindAllStringIndex(s, -1) {
		b.WriteString(template.HTMLEscapeString(s[last:m[0]]))
		b.WriteString(`<code class="flag">`)
		b.WriteString(template.HTMLEscapeString(s[m[0]:m[1]]))
		b.WriteString(`</code>`)
		last = m[1]
	}
	b.WriteString(template.HTMLEscapeString(s[last:]))
	return template.HTML(b.String())
}

// BytesClasses are the shades by bytes per token, with their least bytes.
var BytesClasses = []struct {
	Class, Label string
	From         int
}{{"b1", "1 byte", 1}, {"b2", "2–3", 2}, {"b3", "4–5", 4}, {"b4", "6+ bytes", 6}}

// BytesClass returns the shade of a token of n bytes.
func BytesClass(n int) string {
	c := BytesClasses[0].Class
	for _, b := range BytesClasses {
		if n >= b.From {
			c = b.Class
		}
	}
	return c
}

// readableBytes returns the bytes a piece in its readable form stands
// for: ␣ ␉ ␊ ␍ one each, <E9 BE> one a pair of hex digits.
func readableBytes(piece string) int {
	n := 0
	for i := 0; i < len(piece); {
		if piece[i] == '<' {
			if j := strings.IndexByte(piece[i:], '>'); j > 0 {
				n += (j + 1) / 3
				i += j + 1
				continue
			}
		}
		r, size := utf8.DecodeRuneInString(piece[i:])
		switch r {
		case '␣', '␉', '␊', '␍':
			n++
		default:
			n += size
		}
		i += size
	}
	return n
}
