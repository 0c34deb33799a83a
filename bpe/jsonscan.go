package bpe

import (
	"bytes"
	"morsel/internal/textfile"

	"fmt"
	"strconv"
	"unicode/utf16"
	"unicode/utf8"
)

// jscan reads the large parts of a bundle (the vocabulary object and the
// merges array) straight from the file's bytes: encoding/json's token
// reader costs about a microsecond a token, and a large bundle has
// millions. Offsets stay absolute, so errors can name the line.
type jscan struct {
	name string
	data []byte
	pos  int
}

func (j *jscan) errAt(off int, format string, args ...any) error {
	return &posError{j.name, textfile.Line(j.data, int64(off)), fmt.Sprintf(format, args...)}
}

func (j *jscan) cutShort() error {
	return j.errAt(len(j.data), "not valid JSON: the file is cut short")
}

// ws skips white space and reports whether bytes remain.
func (j *jscan) ws() bool {
	for j.pos < len(j.data) {
		switch j.data[j.pos] {
		case ' ', '\t', '\r', '\n':
			j.pos++
		default:
			return true
		}
	}
	return false
}

// expect consumes byte c after white space.
func (j *jscan) expect(c byte, what string) error {
	if !j.ws() {
		return j.cutShort()
	}
	if j.data[j.pos] != c {
		return j.errAt(j.pos, "not valid JSON: expected %s, found %q", what, j.data[j.pos])
	}
	j.pos++
	return nil
}

// peek returns the next byte after white space, or 0 at the end.
func (j *jscan) peek() byte {
	if !j.ws() {
		return 0
	}
	return j.data[j.pos]
}

// str reads a JSON string and returns its bytes, reusing buf. A string
// with no escapes is returned as a slice of the data itself.
func (j *jscan) str(buf []byte) ([]byte, error) {
	if err := j.expect('"', "a string"); err != nil {
		return nil, err
	}
	start := j.pos
	for i := start; i < len(j.data); i++ {
		switch c := j.data[i]; {
		case c == '"':
			j.pos = i + 1
			return j.data[start:i], nil
		case c == '\\':
			return j.strSlow(append(buf[:0], j.data[start:i]...), i)
		case c < 0x20:
			return nil, j.errAt(i, "not valid JSON: a control byte inside a string")
		}
	}
	return nil, j.cutShort()
}

func (j *jscan) strSlow(out []byte, i int) ([]byte, error) {
	d := j.data
	for i < len(d) {
		c := d[i]
		switch {
		case c == '"':
			j.pos = i + 1
			return out, nil
		case c < 0x20:
			return nil, j.errAt(i, "not valid JSON: a control byte inside a string")
		case c != '\\':
			out = append(out, c)
			i++
			continue
		}
		if i+1 >= len(d) {
			return nil, j.cutShort()
		}
		e := d[i+1]
		i += 2
		switch e {
		case '"', '\\', '/':
			out = append(out, e)
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
			r, ok := hex4(d, i)
			if !ok {
				return nil, j.errAt(i, "not valid JSON: a bad \\u escape")
			}
			i += 4
			if utf16.IsSurrogate(r) {
				r2, ok2 := rune(0), false
				if i+6 <= len(d) && d[i] == '\\' && d[i+1] == 'u' {
					r2, ok2 = hex4(d, i+2)
				}
				if dec := utf16.DecodeRune(r, r2); ok2 && dec != utf8.RuneError {
					r = dec
					i += 6
				} else {
					r = utf8.RuneError
				}
			}
			out = utf8.AppendRune(out, r)
		default:
			return nil, j.errAt(i-2, "not valid JSON: a bad escape \\%c", e)
		}
	}
	return nil, j.cutShort()
}

func hex4(d []byte, i int) (rune, bool) {
	if i+4 > len(d) {
		return 0, false
	}
	x, err := strconv.ParseUint(string(d[i:i+4]), 16, 32)
	return rune(x), err == nil
}

// int reads a JSON number that must be a whole number.
func (j *jscan) int() (int64, int, error) {
	if !j.ws() {
		return 0, 0, j.cutShort()
	}
	start := j.pos
	i := start
	for i < len(j.data) {
		c := j.data[i]
		if (c >= '0' && c <= '9') || c == '-' || c == '+' || c == '.' || c == 'e' || c == 'E' {
			i++
			continue
		}
		break
	}
	j.pos = i
	if i == start {
		return 0, start, j.errAt(start, "expected a number")
	}
	n, err := strconv.ParseInt(string(j.data[start:i]), 10, 64)
	if err != nil {
		return 0, start, j.errAt(start, "%q is not a whole number", j.data[start:i])
	}
	return n, start, nil
}

// skip passes over one JSON value of any kind and returns its span.
func (j *jscan) skip() (int, int, error) {
	if !j.ws() {
		return 0, 0, j.cutShort()
	}
	start := j.pos
	depth := 0
	for j.pos < len(j.data) {
		c := j.data[j.pos]
		switch c {
		case '"':
			if _, err := j.str(nil); err != nil {
				return 0, 0, err
			}
			if depth == 0 {
				return start, j.pos, nil
			}
			continue
		case '{', '[':
			depth++
		case '}', ']':
			depth--
			if depth < 0 {
				return 0, 0, j.errAt(j.pos, "not valid JSON: unexpected %q", c)
			}
			if depth == 0 {
				j.pos++
				return start, j.pos, nil
			}
		case ',', ':', ' ', '\t', '\r', '\n':
			if depth == 0 {
				return start, j.pos, nil
			}
		default:
			if depth == 0 {
				// a bare literal: number, true, false or null
				for j.pos < len(j.data) && !isJSONDelim(j.data[j.pos]) {
					j.pos++
				}
				return start, j.pos, nil
			}
		}
		j.pos++
	}
	return 0, 0, j.cutShort()
}

func isJSONDelim(c byte) bool {
	switch c {
	case ',', ':', '}', ']', ' ', '\t', '\r', '\n', '{', '[', '"':
		return true
	}
	return false
}

// own returns b if it is a slice of the data (a string with no escapes),
// else a copy of it: bytes that outlive the next read.
func (j *jscan) own(b []byte) []byte {
	if j.inData(b) {
		return b
	}
	return bytes.Clone(b)
}

// inData reports whether b is a slice of the data.
func (j *jscan) inData(b []byte) bool {
	if cap(b) == 0 {
		return false
	}
	at := cap(j.data) - cap(b)
	return at >= 0 && at < cap(j.data) && &j.data[:cap(j.data)][at] == &b[:cap(b)][0]
}

// keep makes *buf the buffer of s, a string just read with *buf, when s
// was unescaped into it (and may have grown it): the next read reuses it.
func (j *jscan) keep(buf *[]byte, s []byte) {
	if !j.inData(s) {
		*buf = s[:0]
	}
}

// count returns the number of elements of the array at offset at,
// leaving the position where it was.
func (j *jscan) count(at int) (int, error) {
	saved := j.pos
	defer func() { j.pos = saved }()
	j.pos = at
	n := 0
	err := j.array(func(int, int) error {
		n++
		_, _, err := j.skip()
		return err
	})
	return n, err
}

// object calls fn for each key of the object at the current position;
// fn must consume the value.
func (j *jscan) object(fn func(key string, at int) error) error {
	return j.objectBytes(func(key []byte, at int) error { return fn(string(key), at) })
}

// objectBytes is object with the key as bytes, valid until the next read.
func (j *jscan) objectBytes(fn func(key []byte, at int) error) error {
	if err := j.expect('{', "an object"); err != nil {
		return err
	}
	if j.peek() == '}' {
		j.pos++
		return nil
	}
	var kb []byte
	for {
		at := j.pos
		k, err := j.str(kb)
		if err != nil {
			return err
		}
		if err := j.expect(':', "':'"); err != nil {
			return err
		}
		if err := fn(k, at); err != nil {
			return err
		}
		switch j.peek() {
		case ',':
			j.pos++
		case '}':
			j.pos++
			return nil
		case 0:
			return j.cutShort()
		default:
			return j.errAt(j.pos, "not valid JSON: expected ',' or '}'")
		}
	}
}

// array calls fn for each element of the array at the current position;
// fn must consume the element.
func (j *jscan) array(fn func(i, at int) error) error {
	if err := j.expect('[', "an array"); err != nil {
		return err
	}
	if j.peek() == ']' {
		j.pos++
		return nil
	}
	for i := 0; ; i++ {
		j.ws()
		if err := fn(i, j.pos); err != nil {
			return err
		}
		switch j.peek() {
		case ',':
			j.pos++
		case ']':
			j.pos++
			return nil
		case 0:
			return j.cutShort()
		default:
			return j.errAt(j.pos, "not valid JSON: expected ',' or ']'")
		}
	}
}
