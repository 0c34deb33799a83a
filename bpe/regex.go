package bpe

import (
	"errors"
	"fmt"
	"time"
	"unicode/utf8"

	"github.com/dlclark/regexp2"
)

// MatchTimeout bounds the time one regular-expression search may take on a
// text, so that a pattern with catastrophic backtracking cannot hang a run.
const MatchTimeout = 2 * time.Second

// ErrPatternTimeout is wrapped by the error of a text on which a split or
// replace pattern ran past MatchTimeout.
var ErrPatternTimeout = errors.New("the split pattern ran past its time limit")

// splitRegex is a regular expression of a bundle (or of --split), run by
// regexp2 with a match timeout.
type splitRegex struct {
	src string
	re  *regexp2.Regexp
}

// compileSplitRegex compiles pattern. It fails on a pattern regexp2 cannot
// compile and on one that matches the empty text, whose empty matches
// would say nothing about where pieces end.
func compileSplitRegex(pattern string) (*splitRegex, error) {
	re, err := regexp2.Compile(pattern, regexp2.Unicode)
	if err != nil {
		re, err = regexp2.Compile(pattern, regexp2.None)
	}
	if err != nil {
		return nil, fmt.Errorf("pattern %q does not compile: %w", pattern, err)
	}
	re.MatchTimeout = MatchTimeout
	if ok, _ := re.MatchString(""); ok {
		return nil, fmt.Errorf("pattern %q matches the empty text; a split pattern must match at least one character", pattern)
	}
	return &splitRegex{src: pattern, re: re}, nil
}

// matches appends the byte spans [start, end) of every non-empty match in
// t to ms. Empty matches are skipped, so the pieces always tile the text.
// A timeout is recorded in the returned error (the first one kept) and
// ends the search: what was found so far is returned.
func (r *splitRegex) matches(t []byte, ms []int, prev error) ([]int, error) {
	if len(t) == 0 {
		return ms, prev
	}
	// regexp2 matches over runes; map rune indexes back to byte offsets.
	// Every invalid byte is one rune (U+FFFD), as utf8.DecodeRune steps.
	runes := make([]rune, 0, len(t))
	offs := make([]int, 0, len(t)+1)
	for i := 0; i < len(t); {
		c, n := utf8.DecodeRune(t[i:])
		runes = append(runes, c)
		offs = append(offs, i)
		i += n
	}
	offs = append(offs, len(t))
	m, err := r.re.FindRunesMatch(runes)
	for err == nil && m != nil {
		if m.Length > 0 {
			ms = append(ms, offs[m.Index], offs[m.Index+m.Length])
		}
		m, err = r.re.FindNextMatch(m)
	}
	if err != nil && prev == nil {
		prev = fmt.Errorf("%w (%s, pattern %q)", ErrPatternTimeout, MatchTimeout, r.src)
	}
	return ms, prev
}
