package corpus

import (
	"bufio"
	"errors"
	"fmt"
	"io"

	"golang.org/x/net/html"
)

// htmlDropped holds the elements whose content is not visible text.
var htmlDropped = map[string]bool{
	"script": true, "style": true, "template": true, "noscript": true, "title": true,
}

// htmlBlocks holds the elements that start and end a line.
var htmlBlocks = map[string]bool{}

func init() {
	for _, t := range []string{"address", "article", "aside", "blockquote", "body", "caption",
		"dd", "details", "dialog", "div", "dl", "dt", "fieldset", "figcaption", "figure", "footer",
		"form", "h1", "h2", "h3", "h4", "h5", "h6", "header", "hgroup", "hr", "html", "legend", "li",
		"main", "nav", "ol", "option", "p", "pre", "section", "summary", "table", "tbody", "tfoot",
		"thead", "tr", "ul"} {
		htmlBlocks[t] = true
	}
}

// textWriter collects visible text, collapsing white space.
type textWriter struct {
	out       []byte
	space     bool // white space is pending
	lineStart bool // nothing written on the current line yet
}

func (w *textWriter) text(b []byte, pre bool) {
	for _, c := range b {
		if pre {
			w.out = append(w.out, c)
			w.lineStart = c == '\n'
			w.space = false
			continue
		}
		switch c {
		case ' ', '\t', '\n', '\r', '\f':
			w.space = true
			continue
		}
		if w.space && !w.lineStart && len(w.out) > 0 {
			w.out = append(w.out, ' ')
		}
		w.out = append(w.out, c)
		w.space, w.lineStart = false, false
	}
}

// block ends the current line unless it is empty.
func (w *textWriter) block() {
	if len(w.out) > 0 && !w.lineStart {
		w.out = append(w.out, '\n')
	}
	w.lineStart, w.space = true, false
}

func (w *textWriter) lineBreak() {
	w.out = append(w.out, '\n')
	w.lineStart, w.space = true, false
}

// visibleText returns the visible text of an HTML document, following the
// rules in the package comment.
func visibleText(in io.Reader, maxBuf int, maxOut int64) ([]byte, error) {
	z := html.NewTokenizer(in)
	z.SetMaxBuf(maxBuf)
	var w textWriter
	w.lineStart = true
	dropped, pre := 0, 0
	for {
		tt := z.Next()
		switch tt {
		case html.ErrorToken:
			err := z.Err()
			if err == io.EOF {
				for len(w.out) > 0 && w.out[len(w.out)-1] == '\n' {
					w.out = w.out[:len(w.out)-1]
				}
				return w.out, nil
			}
			return nil, err
		case html.TextToken:
			if dropped == 0 {
				w.text(z.Text(), pre > 0)
				if int64(len(w.out)) > maxOut {
					return nil, ErrDocumentTooLarge
				}
			}
		case html.StartTagToken, html.SelfClosingTagToken, html.EndTagToken:
			name, _ := z.TagName()
			tag := string(name)
			start := tt != html.EndTagToken
			switch {
			case htmlDropped[tag]:
				if tt == html.StartTagToken {
					dropped++
				} else if tt == html.EndTagToken && dropped > 0 {
					dropped--
				}
			case dropped > 0:
			case tag == "br":
				w.lineBreak()
			case tag == "td" || tag == "th":
				w.space = true
			case htmlBlocks[tag]:
				w.block()
				if tag == "pre" && tt != html.SelfClosingTagToken {
					if start {
						pre++
					} else if pre > 0 {
						pre--
					}
				}
			}
		}
	}
}

// html reads an HTML file as one document of its visible text.
func (r *reader) html(in *bufio.Reader) error {
	max := int(r.opt.MaxRecord)
	if int64(max) != r.opt.MaxRecord {
		max = 1 << 30
	}
	text, err := visibleText(in, max, r.opt.MaxDocument)
	if err == nil {
		err = r.src.err
	}
	if errors.Is(err, ErrDocumentTooLarge) {
		return r.skip(0, ReasonTooLarge, tooLargeDetail(r.opt.MaxDocument), true)
	}
	if err != nil {
		if errors.Is(err, html.ErrBufferExceeded) {
			return r.skip(0, ReasonTooLarge, fmt.Sprintf("an HTML token is longer than %d bytes", max), true)
		}
		return r.readFailed(0, "", err)
	}
	if len(text) == 0 {
		return r.skip(0, ReasonEmpty, "no visible text", false)
	}
	return r.doc(&Document{Format: FormatHTML, Text: text, Size: int64(len(text))})
}
