package corpus

import (
	"strconv"
	"unicode"
	"unicode/utf16"
	"unicode/utf8"
)

// maxJSONDepth is the deepest nesting a record may have, as in
// encoding/json, which refuses records nested more deeply.
const maxJSONDepth = 10000

// jsonPath is a parsed Options.Field: each part as a member name and, when
// it parses as one, as an array index (-1 when it does not).
type jsonPath struct {
	names []string
	index []int
}

func newJSONPath(parts []string) jsonPath {
	p := jsonPath{names: parts, index: make([]int, len(parts))}
	for i, part := range parts {
		k, err := strconv.Atoi(part)
		if err != nil || k < 0 {
			k = -1
		}
		p.index[i] = k
	}
	return p
}

// findScanner checks that a record is one valid JSON value (as json.Valid
// does) and, in the same pass, finds the value at a path: one reading of
// the record instead of a check and two decodings.
type findScanner struct {
	b     []byte
	i     int
	depth int
	path  jsonPath
	// found is the span of the value at the path, the last one when an
	// object repeats a member (as decoding into a map keeps the last).
	found []byte
	// foundPlain is set when found is a string whose contents need no
	// decoding (no escape, ASCII only).
	foundPlain bool
}

// findValue reports whether rec is valid JSON and returns the value at
// path in it (nil when the path leads nowhere), and whether that value is a
// string that needs no decoding.
func findValue(rec []byte, path jsonPath) (val []byte, plain, valid bool) {
	s := findScanner{b: rec, path: path}
	s.space()
	if !s.value(0, true) {
		return nil, false, false
	}
	s.space()
	if s.i != len(s.b) {
		return nil, false, false
	}
	return s.found, s.foundPlain && len(s.found) > 0 && s.found[0] == '"', true
}

func (s *findScanner) space() {
	for s.i < len(s.b) {
		switch s.b[s.i] {
		case ' ', '\t', '\n', '\r':
			s.i++
		default:
			return
		}
	}
}

// value scans one value at s.i; onPath tells whether the value is where
// the first level parts of the path lead.
func (s *findScanner) value(level int, onPath bool) bool {
	if s.i >= len(s.b) {
		return false
	}
	start := s.i
	ok := false
	switch c := s.b[s.i]; {
	case c == '{':
		ok = s.object(level, onPath && level < len(s.path.names))
	case c == '[':
		ok = s.array(level, onPath && level < len(s.path.names))
	case c == '"':
		var plain bool
		_, plain, ok = s.str()
		if ok && onPath && level == len(s.path.names) {
			s.foundPlain = plain
		}
	case c == 't':
		ok = s.literal("true")
	case c == 'f':
		ok = s.literal("false")
	case c == 'n':
		ok = s.literal("null")
	case c == '-' || ('0' <= c && c <= '9'):
		ok = s.number()
	}
	if ok && onPath && level == len(s.path.names) {
		s.found = s.b[start:s.i]
		if c := s.b[start]; c != '"' {
			s.foundPlain = false
		}
	}
	return ok
}

func (s *findScanner) literal(lit string) bool {
	if len(s.b)-s.i < len(lit) || string(s.b[s.i:s.i+len(lit)]) != lit {
		return false
	}
	s.i += len(lit)
	return true
}

func (s *findScanner) digits() int {
	n := 0
	for s.i < len(s.b) && '0' <= s.b[s.i] && s.b[s.i] <= '9' {
		s.i++
		n++
	}
	return n
}

// number scans -?(0|[1-9][0-9]*)(.[0-9]+)?([eE][+-]?[0-9]+)? (RFC 8259,
// section 6).
func (s *findScanner) number() bool {
	if s.b[s.i] == '-' {
		s.i++
	}
	if s.i >= len(s.b) {
		return false
	}
	if s.b[s.i] == '0' {
		s.i++
	} else if s.digits() == 0 {
		return false
	}
	if s.i < len(s.b) && s.b[s.i] == '.' {
		s.i++
		if s.digits() == 0 {
			return false
		}
	}
	if s.i < len(s.b) && (s.b[s.i] == 'e' || s.b[s.i] == 'E') {
		s.i++
		if s.i < len(s.b) && (s.b[s.i] == '+' || s.b[s.i] == '-') {
			s.i++
		}
		if s.digits() == 0 {
			return false
		}
	}
	return true
}

// strStop marks the bytes that end a run of plain string contents: the
// quote, the backslash, control characters and non-ASCII bytes.
var strStop = func() (t [256]bool) {
	for c := range 256 {
		t[c] = c == '"' || c == '\\' || c < ' ' || c >= utf8.RuneSelf
	}
	return t
}()

// str scans a string and returns its raw contents, between the quotes, and
// whether they hold an escape or a non-ASCII byte (and so need unquote).
func (s *findScanner) str() (raw []byte, plain bool, ok bool) {
	s.i++ // the opening quote
	start := s.i
	plain = true
	for s.i < len(s.b) {
		for s.i < len(s.b) && !strStop[s.b[s.i]] {
			s.i++
		}
		if s.i >= len(s.b) {
			break
		}
		c := s.b[s.i]
		switch {
		case c == '"':
			raw = s.b[start:s.i]
			s.i++
			return raw, plain, true
		case c == '\\':
			plain = false
			s.i++
			if s.i >= len(s.b) {
				return nil, false, false
			}
			switch s.b[s.i] {
			case '"', '\\', '/', 'b', 'f', 'n', 'r', 't':
				s.i++
			case 'u':
				if len(s.b)-s.i < 5 || hex4(s.b[s.i+1:s.i+5]) < 0 {
					return nil, false, false
				}
				s.i += 5
			default:
				return nil, false, false
			}
		case c < ' ':
			return nil, false, false
		default: // non-ASCII
			plain = false
			s.i++
		}
	}
	return nil, false, false
}

func (s *findScanner) object(level int, onPath bool) bool {
	if s.depth++; s.depth > maxJSONDepth {
		return false
	}
	s.i++ // '{'
	s.space()
	if s.i < len(s.b) && s.b[s.i] == '}' {
		s.i++
		s.depth--
		return true
	}
	for {
		if s.i >= len(s.b) || s.b[s.i] != '"' {
			return false
		}
		key, plain, ok := s.str()
		if !ok {
			return false
		}
		s.space()
		if s.i >= len(s.b) || s.b[s.i] != ':' {
			return false
		}
		s.i++
		s.space()
		if !s.value(level+1, onPath && keyIs(key, plain, s.path.names[level])) {
			return false
		}
		if more, ok := s.next('}'); !more {
			return ok
		}
	}
}

func (s *findScanner) array(level int, onPath bool) bool {
	if s.depth++; s.depth > maxJSONDepth {
		return false
	}
	s.i++ // '['
	s.space()
	if s.i < len(s.b) && s.b[s.i] == ']' {
		s.i++
		s.depth--
		return true
	}
	want := -1
	if onPath {
		want = s.path.index[level]
	}
	for k := 0; ; k++ {
		if !s.value(level+1, k == want) {
			return false
		}
		if more, ok := s.next(']'); !more {
			return ok
		}
	}
}

// next reads what follows a member or element: a comma, after which it
// reports more, or the closing byte, which ends the container (ok).
func (s *findScanner) next(close byte) (more, ok bool) {
	s.space()
	if s.i >= len(s.b) {
		return false, false
	}
	switch s.b[s.i] {
	case ',':
		s.i++
		s.space()
		return true, true
	case close:
		s.i++
		s.depth--
		return false, true
	}
	return false, false
}

// keyIs reports whether the raw contents of a member name decode to name.
func keyIs(raw []byte, plain bool, name string) bool {
	if plain {
		return string(raw) == name
	}
	return string(unquote(raw)) == name
}

func hex4(b []byte) rune {
	var r rune
	for _, c := range b {
		switch {
		case '0' <= c && c <= '9':
			c -= '0'
		case 'a' <= c && c <= 'f':
			c = c - 'a' + 10
		case 'A' <= c && c <= 'F':
			c = c - 'A' + 10
		default:
			return -1
		}
		r = r*16 + rune(c)
	}
	return r
}

// unquote decodes the raw contents of a string that findScanner accepted,
// into new memory, as encoding/json does: escapes decoded, a lone or
// broken surrogate and each byte of invalid UTF-8 replaced by U+FFFD.
func unquote(raw []byte) []byte {
	out := make([]byte, 0, len(raw))
	for i := 0; i < len(raw); {
		c := raw[i]
		switch {
		case c == '\\':
			e := raw[i+1]
			i += 2
			switch e {
			case 'b':
				out = append(out, '\b')
			case 'f':
				out = append(out, '\f')
			case 'n':
				out = append(out, '\n')
			case 'r':
				out = append(out, '\r')
			case 't':
				out = append(out, '\t')
			case 'u':
				r := hex4(raw[i : i+4])
				i += 4
				if utf16.IsSurrogate(r) {
					r2 := rune(-1)
					if i+6 <= len(raw) && raw[i] == '\\' && raw[i+1] == 'u' {
						r2 = hex4(raw[i+2 : i+6])
					}
					if d := utf16.DecodeRune(r, r2); d != unicode.ReplacementChar {
						r = d
						i += 6
					} else {
						r = unicode.ReplacementChar
					}
				}
				out = utf8.AppendRune(out, r)
			default: // '"', '\\', '/'
				out = append(out, e)
			}
		case c < utf8.RuneSelf:
			// Copy a run of plain ASCII at once.
			j := i + 1
			for j < len(raw) && raw[j] < utf8.RuneSelf && raw[j] != '\\' {
				j++
			}
			out = append(out, raw[i:j]...)
			i = j
		default:
			r, n := utf8.DecodeRune(raw[i:])
			if r == utf8.RuneError && n == 1 {
				out = utf8.AppendRune(out, r)
			} else {
				out = append(out, raw[i:i+n]...)
			}
			i += n
		}
	}
	return out
}

// stringText returns the text of a JSON string value that findScanner
// accepted, in new memory; plain says the contents need no decoding.
func stringText(val []byte, plain bool) []byte {
	if plain {
		return append([]byte(nil), val[1:len(val)-1]...)
	}
	return unquote(val[1 : len(val)-1])
}
