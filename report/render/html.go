package render

import (
	"bufio"
	"fmt"
	"html/template"
	"io"
	"strings"

	"morsel/report"
)

// The HTML view: one self-contained page per report, with its styles
// inline, its charts as inline SVG and no script, so that it opens offline,
// prints, and loads nothing from anywhere. All text goes through
// html/template, which escapes it for the place it lands in; the SVG
// charts escape their own text (see esc).

// palette holds the page's colours. The text pairs are checked against
// the WCAG 2.1 contrast minimum for normal text (4.5:1) in the tests.
var palette = struct {
	Ink, Muted, Paper, Card, Rule, Bar, Over, Mark, Mean string
	Shade                                                [3]string
	Split                                                string
	// Bytes shades a token by the bytes it covers: Bytes[0] for one byte
	// (darkest: text that costs a token a byte), then two or three, four
	// or five, and six or more (lightest).
	Bytes [4]string
	Edge  string // the thin rule at the end of each token
}{
	Ink:   "#1c2230",
	Muted: "#4f5869",
	Paper: "#f5f4f0",
	Card:  "#ffffff",
	Rule:  "#d5d2ca",
	Bar:   "#2f6690",
	Over:  "#b3402a",
	Mark:  "#a3301c",
	Mean:  "#5c4a8a",
	Shade: [3]string{"#c9def0", "#f5d3a8", "#cde6c0"},
	Split: "#6b3590",
	Bytes: [4]string{"#86a3c8", "#afc4de", "#d3dfee", "#eef3f9"},
	Edge:  "#53637a",
}

// css is the page's style sheet. It names no fonts to fetch and no url().
var css = strings.NewReplacer(
	"$ink", palette.Ink, "$muted", palette.Muted, "$paper", palette.Paper, "$card", palette.Card,
	"$rule", palette.Rule, "$bar", palette.Bar, "$over", palette.Over, "$mark", palette.Mark,
	"$mean", palette.Mean, "$shade0", palette.Shade[0], "$shade1", palette.Shade[1],
	"$shade2", palette.Shade[2], "$split", palette.Split,
	"$bytes0", palette.Bytes[0], "$bytes1", palette.Bytes[1], "$bytes2", palette.Bytes[2], "$bytes3", palette.Bytes[3],
	"$edge", palette.Edge,
).Replace(`
:root { color-scheme: light; }
* { box-sizing: border-box; }
body { margin: 0; background: $paper; color: $ink; font: 15px/1.5 system-ui, -apple-system, "Segoe UI", sans-serif; }
main { max-width: 1040px; margin: 0 auto; padding: 20px 18px 40px; }
header.top { border-bottom: 3px solid $bar; padding-bottom: 10px; margin-bottom: 14px; }
h1 { font-size: 1.6em; margin: 0 0 4px; }
h1 .cmd { color: $bar; }
h2 { font-size: 1.2em; margin: 0 0 8px; }
p.lead, p.intro, .muted { color: $muted; }
p.lead { margin: 0; }
nav.toc { font-size: 0.92em; margin: 8px 0 0; }
nav.toc a { color: $bar; margin-right: 14px; white-space: nowrap; }
dl.facts { display: flex; flex-wrap: wrap; gap: 4px 20px; margin: 8px 0 0; font-size: 0.92em; }
dl.facts div { display: flex; gap: 6px; }
dl.facts dt { color: $muted; }
dl.facts dd { margin: 0; font-weight: 600; }
section { background: $card; border: 1px solid $rule; border-radius: 6px; padding: 14px 16px; margin: 14px 0; }
.cards { display: flex; flex-wrap: wrap; gap: 8px; margin: 6px 0 12px; }
.card { border: 1px solid $rule; border-left: 4px solid $bar; border-radius: 4px; padding: 6px 10px; background: $card; }
.card.warn { border-left-color: $over; }
.card .v { display: block; font-size: 1.35em; font-weight: 700; font-variant-numeric: tabular-nums; white-space: nowrap; }
.card .l { display: block; color: $muted; font-size: 0.85em; }
figure { margin: 8px 0 14px; overflow-x: auto; }
svg.chart { width: 100%; min-width: 540px; height: auto; display: block; font-family: system-ui, sans-serif; }
svg .ctitle { font-size: 14px; font-weight: 700; fill: $ink; }
svg .tick, svg .rowlabel { font-size: 11px; fill: $muted; }
svg .val { font-size: 11px; fill: $ink; font-variant-numeric: tabular-nums; }
svg .alabel { font-size: 12px; fill: $ink; }
svg .grid { stroke: $rule; stroke-width: 1; }
svg .axis { stroke: $muted; stroke-width: 1; }
svg .bar { fill: $bar; }
svg .bar.over { fill: $over; }
svg .bar.part { fill: $shade0; stroke: $bar; }
svg .mark { stroke: $mark; stroke-width: 2; stroke-dasharray: 6 4; }
svg .mark.spread { stroke: $mean; stroke-dasharray: 2 3; }
svg .marklabel { font-size: 12px; font-weight: 600; fill: $mark; }
svg .marklabel.spread { fill: $mean; }
.tablewrap { overflow-x: auto; margin: 6px 0 12px; }
table { border-collapse: collapse; font-size: 0.9em; min-width: 50%; }
caption { text-align: left; font-weight: 600; padding: 4px 0; }
th, td { padding: 3px 10px 3px 0; border-bottom: 1px solid $rule; text-align: left; vertical-align: top; }
th { color: $muted; font-weight: 600; }
td.num, th.num { text-align: right; font-variant-numeric: tabular-nums; }
td.num, td.src { white-space: nowrap; }
td.warn { color: $over; font-weight: 600; white-space: nowrap; }
code.flag { font: 0.92em ui-monospace, "DejaVu Sans Mono", monospace; white-space: nowrap; }
ul.notes { padding-left: 20px; }
ul.notes li { margin: 4px 0; }
.pieces { white-space: pre-wrap; overflow-wrap: anywhere; font: 14px/1.9 ui-monospace, "Cascadia Mono", "DejaVu Sans Mono", monospace; border: 1px solid $rule; border-radius: 4px; padding: 10px; max-height: 34em; overflow-y: auto; background: $card; }
.p { box-shadow: inset -1px 0 0 $edge; -webkit-print-color-adjust: exact; print-color-adjust: exact; }
.b1 { background: $bytes0; } .b2 { background: $bytes1; } .b3 { background: $bytes2; } .b4 { background: $bytes3; }
.b1 .nl, .b2 .nl { color: $ink; }
.legend .key { display: inline-block; margin-right: 10px; white-space: nowrap; }
.legend .key .p { display: inline-block; min-width: 2.2em; text-align: center; }
.p.multi { text-decoration: underline dotted $split 1px; text-underline-offset: 4px; }
.nl { color: $muted; font-size: 0.8em; }
.legend { font-size: 0.9em; color: $muted; }
.legend .p { padding: 0 4px; color: $ink; }
.split .p { padding: 1px 2px; font-family: ui-monospace, "DejaVu Sans Mono", monospace; }
footer { color: $muted; font-size: 0.85em; margin-top: 20px; }
@media (max-width: 640px) {
  body { font-size: 14px; }
  main { padding: 10px 8px 30px; }
  section { padding: 10px; }
  .card { min-width: 40%; }
}
@media print {
  body { background: #fff; font-size: 11pt; }
  main { max-width: none; padding: 0; }
  nav.toc { display: none; }
  section { border: none; border-top: 1px solid $rule; border-radius: 0; padding: 8px 0; break-inside: avoid-page; }
  figure, table, .card { break-inside: avoid; }
  figure { overflow: visible; }
  svg.chart { min-width: 0; }
  .pieces { max-height: none; overflow: visible; }
  .p, svg .bar { -webkit-print-color-adjust: exact; print-color-adjust: exact; }
}
`)

// page is one HTML report.
type Page struct {
	Command  string // the command that wrote it, shown in the heading
	Title    string
	Lead     string
	Facts    []Fact
	Sections []Section
	Notes    []string
}

// fact is a labelled figure: a vocabulary fact in the heading or a card.
type Fact struct {
	Label, Value string
	Warn         bool
	Exact        string // the exact figure when Value is rounded, shown on hover
}

// section is one part of a page, each part optional.
type Section struct {
	ID, Heading, Intro string
	Cards              []Fact
	Charts             []template.HTML // trusted: built by the svg.go charts, which escape their text
	Sample             *SampleView
	Words              *WordsView
	Tables             []TableView
	Notes              []string
}

// tableView is a Grid ready for the template.
type TableView struct {
	Title  string
	Header []CellView
	Rows   [][]CellView
	Notes  []string
}

type CellView struct {
	Text string
	Num  bool
	Src  bool
	Warn bool   // a figure that calls for attention (an overflow)
	Tip  string // the whole text when Text is cut
}

// tableOf turns a grid into a table view. srcCol is the column holding
// document names, which may break anywhere in a narrow window (-1: none).
func TableOf(g *Grid, srcCol int) TableView {
	right := map[int]bool{}
	for _, c := range g.Right {
		right[c] = true
	}
	t := TableView{Title: g.Title, Notes: g.Notes}
	for i, h := range g.Header {
		t.Header = append(t.Header, CellView{Text: h, Num: right[i]})
	}
	for _, r := range g.Rows {
		row := make([]CellView, len(r))
		for i, c := range r {
			row[i] = CellView{Text: c, Num: right[i], Src: i == srcCol}
		}
		t.Rows = append(t.Rows, row)
	}
	return t
}

// sampleView is a sample document as runs of shaded pieces.
type SampleView struct {
	Where, Why string
	Units      []UnitView
	Cut        bool
	Summary    string
	Keys       []ShadeKey // the legend: one key per shade
}

// ShadeKey is one shade of the legend with the share of tokens it marks.
type ShadeKey struct {
	Class, Label, Share string
}

// unitView is one shaded run: one token, or several tokens that share the
// bytes of one character and so cannot be shown apart.
type UnitView struct {
	Class string
	Tip   string
	Parts []partView
}

// partView is text within a unit, or a line feed shown with a mark.
type partView struct {
	Text string
	NL   bool
}

// wordsView is a list of words with their pieces shaded one by one.
type WordsView struct {
	Title  string
	Header []CellView
	Rows   []WordRow
}

type WordRow struct {
	Cells  []CellView // the cells before the split
	Pieces []string
	After  []CellView
}

// pieceTemplate writes a unit with no white space of its own, since the
// sample is shown with white space kept.
const pieceTemplate = `{{define "unit"}}<span class="{{.Class}}" title="{{.Tip}}">` +
	`{{range .Parts}}{{if .NL}}<span class="nl" aria-hidden="true">↵</span>{{"\n"}}{{else}}{{.Text}}{{end}}{{end}}</span>{{end}}`

const pageTemplate = `<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<meta name="generator" content="morsel">
<title>{{.Title}}</title>
<style>` + "{{.CSS}}" + `</style>
</head>
<body>
<main>
<header class="top">
<h1><span class="cmd">morsel {{.Command}}</span> · {{.Title}}</h1>
{{with .Lead}}<p class="lead">{{prose .}}</p>{{end}}
{{with .Facts}}<dl class="facts">{{range .}}<div><dt>{{.Label}}</dt><dd>{{.Value}}</dd></div>{{end}}</dl>{{end}}
{{with .Sections}}<nav class="toc" aria-label="Contents">{{range .}}<a href="#{{.ID}}">{{.Heading}}</a> {{end}}</nav>{{end}}
</header>
{{range .Sections}}
<section id="{{.ID}}" aria-labelledby="{{.ID}}-h">
<h2 id="{{.ID}}-h">{{.Heading}}</h2>
{{with .Intro}}<p class="intro">{{prose .}}</p>{{end}}
{{with .Cards}}<div class="cards">{{range .}}<div class="card{{if .Warn}} warn{{end}}"><span class="v"{{with .Exact}} title="{{.}}"{{end}}>{{.Value}}</span><span class="l">{{.Label}}</span></div>{{end}}</div>{{end}}
{{range .Charts}}<figure>{{.}}</figure>
{{end}}
{{with .Sample}}<p class="legend">From <strong>{{.Where}}</strong>, chosen as {{.Why}}. A thin rule ends each token, and its shade says how many bytes of text it covers: the darker, the fewer, so dark stretches are where the text costs the most tokens. Hover over a token for its id and size. <span class="p b2 multi">Underlined</span> runs are several tokens that split one character's bytes between them. ↵ marks a line feed inside a token.</p>
<p class="legend" aria-label="Shades by bytes per token">{{range .Keys}}<span class="key"><span class="p {{.Class}}">{{.Label}}</span> {{.Share}}</span>{{end}}</p>
<p class="legend">{{.Summary}}</p>
<div class="pieces" role="region" aria-label="Sample document split into tokens" tabindex="0">{{range .Units}}{{template "unit" .}}{{end}}</div>
{{if .Cut}}<p class="muted">The document goes on past this point; the page shows its start only.</p>{{end}}
{{end}}
{{with .Words}}<div class="tablewrap"><table class="split">{{with .Title}}<caption>{{.}}</caption>{{end}}
<thead><tr>{{range .Header}}<th scope="col"{{if .Num}} class="num"{{end}}>{{.Text}}</th>{{end}}</tr></thead>
<tbody>{{range .Rows}}<tr>{{range .Cells}}<td{{if .Num}} class="num"{{end}}>{{.Text}}</td>{{end}}<td>{{range .Pieces}}<span class="p {{shade .}}">{{.}}</span>{{end}}</td>{{range .After}}<td{{if .Num}} class="num"{{end}}>{{.Text}}</td>{{end}}</tr>
{{end}}</tbody></table></div>
{{end}}
{{range .Tables}}<div class="tablewrap"><table>{{with .Title}}<caption>{{.}}</caption>{{end}}
<thead><tr>{{range .Header}}<th scope="col"{{if .Num}} class="num"{{end}}>{{.Text}}</th>{{end}}</tr></thead>
<tbody>{{range .Rows}}<tr>{{range .}}<td{{if .Warn}} class="warn"{{else if .Num}} class="num"{{else if .Src}} class="src"{{end}}{{with .Tip}} title="{{.}}"{{end}}>{{.Text}}</td>{{end}}</tr>
{{end}}</tbody></table>{{range .Notes}}<p class="muted">{{prose .}}</p>{{end}}</div>
{{end}}
{{with .Notes}}<ul class="notes">{{range .}}<li>{{prose .}}</li>{{end}}</ul>{{end}}
</section>
{{end}}
{{with .Notes}}<section id="notes" aria-labelledby="notes-h"><h2 id="notes-h">Notes</h2><ul class="notes">{{range .}}<li>{{prose .}}</li>{{end}}</ul></section>{{end}}
<footer>Written by morsel. Token counts are exact for the vocabulary named at the top; costs, where shown, are estimates at the rates given. This page loads nothing from the network and runs no script.</footer>
</main>
</body>
</html>
`

var pageTmpl = template.Must(template.New("page").Funcs(template.FuncMap{
	"shade": func(piece string) string { return BytesClass(readableBytes(piece)) },
	"prose": prose,
}).Parse(pieceTemplate + pageTemplate))

// writePage renders p.
func WritePage(w io.Writer, p *Page) error {
	fitPage(p, ViewOf(w))
	bw := bufio.NewWriter(w)
	data := struct {
		*Page
		CSS template.CSS
	}{p, template.CSS(css)}
	if err := pageTmpl.Execute(bw, data); err != nil {
		return fmt.Errorf("writing the HTML report: %w", err)
	}
	return bw.Flush()
}

// splitLines cuts s at line feeds, each line feed its own part.
func SplitLines(s string) []partView {
	var out []partView
	for {
		i := strings.IndexByte(s, '\n')
		if i < 0 {
			if s != "" {
				out = append(out, partView{Text: s})
			}
			return out
		}
		if i > 0 {
			out = append(out, partView{Text: s[:i]})
		}
		out = append(out, partView{NL: true})
		s = s[i+1:]
	}
}

// vocabFacts describes the vocabulary in a page heading.
func VocabFacts(name string, size, window int) []Fact {
	win := "not known"
	if window > 0 {
		win = Num(window) + " tokens"
	}
	return []Fact{{Label: "vocabulary", Value: name}, {Label: "size", Value: Num(size) + " tokens"}, {Label: "window", Value: win}}
}

func WindowLabel(win int) string {
	if win <= 0 {
		return "over the window (not known)"
	}
	return "over the window on their own"
}

// skipSection lists the inputs and records a report did not count.
func SkipSection(v View, skips []report.Skipped) Section {
	sec := Section{ID: "skipped", Heading: "Not counted",
		Intro: "Inputs and records left out of the figures above. A failed one could not be read; the others were left out on purpose."}
	for _, g := range SkipGrids(v, skips) {
		src := -1
		if g.Sources {
			src = 0
		}
		sec.Tables = append(sec.Tables, TableOf(g, src))
	}
	return sec
}
