package fragments

import (
	"bufio"
	"fmt"
	"io"
	"strings"
	"unicode/utf8"

	"morsel/internal/textfile"
)

// Term is one entry of a glossary.
type Term struct {
	Text string // the term as written, trimmed of surrounding white space
	Line int    // its 1-based line in the glossary file
}

// MaxTermBytes is the longest glossary term accepted.
const MaxTermBytes = 200

// ParseGlossary reads a glossary: one term a line, several words allowed,
// lines whose first non-blank character is '#' are comments, blank lines
// are ignored. name is used in errors, which give the line: a term that is
// not UTF-8, holds a control character, is longer than MaxTermBytes, or is
// given twice.
func ParseGlossary(name string, r io.Reader) ([]Term, error) {
	var terms []Term
	seen := map[string]int{}
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 0, 4096), 1<<20)
	line := 0
	for sc.Scan() {
		line++
		raw := sc.Bytes()
		if line == 1 {
			raw = textfile.TrimBOM(raw)
		}
		if !utf8.Valid(raw) {
			return nil, fmt.Errorf("%s:%d: the line is not valid UTF-8", name, line)
		}
		t := strings.TrimSpace(string(raw))
		if t == "" || t[0] == '#' {
			continue
		}
		for _, r := range t {
			if r < 0x20 || r == 0x7f || (r >= 0x80 && r < 0xa0) {
				return nil, fmt.Errorf("%s:%d: term %q holds the control character U+%04X", name, line, t, r)
			}
		}
		if len(t) > MaxTermBytes {
			return nil, fmt.Errorf("%s:%d: term of %d bytes is longer than %d", name, line, len(t), MaxTermBytes)
		}
		if prev, ok := seen[t]; ok {
			return nil, fmt.Errorf("%s:%d: term %q is already on line %d", name, line, t, prev)
		}
		seen[t] = line
		terms = append(terms, Term{Text: t, Line: line})
	}
	if err := sc.Err(); err != nil {
		return nil, fmt.Errorf("%s:%d: %w", name, line+1, err)
	}
	return terms, nil
}
