package corpus

import (
	"bufio"
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"strconv"
	"strings"
	"unicode/utf8"

	"morsel/internal/textfile"
)

// jsonl reads one record per line.
func (r *reader) jsonl(in *bufio.Reader) error {
	path := newJSONPath(strings.Split(r.opt.Field, "."))
	var buf []byte
	line, records := 0, 0
	tooLarge := false
	for {
		chunk, err := in.ReadSlice('\n')
		if !tooLarge {
			if int64(len(buf)+len(chunk)) > r.opt.MaxRecord {
				tooLarge, buf = true, buf[:0]
			} else {
				buf = append(buf, chunk...)
			}
		}
		if err == bufio.ErrBufferFull {
			continue
		}
		if err != nil && err != io.EOF {
			return r.readFailed(line+1, "line "+strconv.Itoa(line+1), err)
		}
		if err == io.EOF && len(buf) == 0 && !tooLarge {
			break
		}
		line++
		rec := buf
		if line == 1 {
			rec = textfile.TrimBOM(rec)
		}
		if tooLarge {
			records++
			if e := r.skip(line, ReasonTooLarge, lineDetail(line, fmt.Sprintf("longer than %d bytes", r.opt.MaxRecord)), true); e != nil {
				return e
			}
		} else if rec = bytes.TrimSpace(rec); len(rec) > 0 {
			records++
			if e := r.record(line, FormatJSONL, rec, path, func(msg string) string { return lineDetail(line, msg) }); e != nil {
				return e
			}
		}
		buf, tooLarge = buf[:0], false
		if err == io.EOF {
			break
		}
	}
	if r.src.err != nil {
		return r.readFailed(line+1, "after line "+strconv.Itoa(line), r.src.err)
	}
	if records == 0 {
		return r.skip(0, ReasonEmpty, "no records", false)
	}
	return nil
}

// record checks one JSON record and emits its document or skip; where
// turns a message into a Detail naming the record's place.
func (r *reader) record(n int, format string, rec []byte, path jsonPath, where func(string) string) error {
	text, reason, msg, valid := recordText(rec, path)
	if !valid {
		var v any
		err := json.Unmarshal(rec, &v)
		msg := "invalid JSON"
		if err != nil {
			msg = err.Error()
		}
		return r.skip(n, ReasonMalformed, where(msg), true)
	}
	if reason != "" {
		return r.skip(n, reason, where(msg), reason != ReasonEmpty)
	}
	return r.doc(&Document{Record: n, Format: format, Text: text, Size: int64(len(text))})
}

// recordText checks that rec is valid JSON and finds its text by the rules
// in the package comment, returning the text or a reason and a message. A
// string where the path leads, the common case, is found and decoded in
// one pass over the record; anything else is left to fieldText.
func recordText(rec []byte, path jsonPath) (text []byte, reason, msg string, valid bool) {
	val, plain, valid := findValue(rec, path)
	if !valid {
		return nil, "", "", false
	}
	if rec[0] == '"' {
		val = rec // a record that is a string is its own text
		plain = bytes.IndexByte(rec, '\\') < 0 && isASCII(rec)
	}
	if len(val) == 0 || val[0] != '"' {
		text, reason, msg = fieldText(rec, path.names)
		return text, reason, msg, true
	}
	if text = stringText(val, plain); len(text) == 0 {
		return nil, ReasonEmpty, fmt.Sprintf("field %q is empty", strings.Join(path.names, ".")), true
	}
	return text, "", "", true
}

// fieldText finds the text of a valid JSON record by the rules in the
// package comment. It returns the text, or a reason and a message.
func fieldText(rec []byte, path []string) ([]byte, string, string) {
	v := json.RawMessage(rec)
	if rec[0] != '"' && rec[0] != '{' && rec[0] != '[' {
		return nil, ReasonNotText, fmt.Sprintf("the record is %s, not text", kind(rec))
	}
	if rec[0] != '"' {
		for i, part := range path {
			name := strings.Join(path[:i+1], ".")
			switch v[0] {
			case '{':
				var obj map[string]json.RawMessage
				if err := json.Unmarshal(v, &obj); err != nil {
					return nil, ReasonMalformed, err.Error()
				}
				next, ok := obj[part]
				if !ok {
					return nil, ReasonNoField, fmt.Sprintf("no field %q", name)
				}
				v = next
			case '[':
				var arr []json.RawMessage
				if err := json.Unmarshal(v, &arr); err != nil {
					return nil, ReasonMalformed, err.Error()
				}
				k, err := strconv.Atoi(part)
				if err != nil || k < 0 || k >= len(arr) {
					return nil, ReasonNoField, fmt.Sprintf("no field %q", name)
				}
				v = arr[k]
			default:
				return nil, ReasonNoField, fmt.Sprintf("no field %q (%s is %s)", name,
					parentName(path[:i]), kind(v))
			}
			v = bytes.TrimSpace(v)
		}
	}
	name := strings.Join(path, ".")
	switch v[0] {
	case '"':
		var s string
		if err := json.Unmarshal(v, &s); err != nil {
			return nil, ReasonMalformed, err.Error()
		}
		if s == "" {
			return nil, ReasonEmpty, fmt.Sprintf("field %q is empty", name)
		}
		return []byte(s), "", ""
	case 'n':
		return nil, ReasonNoField, fmt.Sprintf("field %q is null", name)
	case '[':
		text, err := joinMessages(v)
		if err != nil {
			return nil, ReasonNotText, fmt.Sprintf("field %q: %v", name, err)
		}
		if len(text) == 0 {
			return nil, ReasonEmpty, fmt.Sprintf("field %q has no message text", name)
		}
		return text, "", ""
	}
	return nil, ReasonNotText, fmt.Sprintf("field %q is %s, not text", name, kind(v))
}

func parentName(path []string) string {
	if len(path) == 0 {
		return "the record"
	}
	return strconv.Quote(strings.Join(path, "."))
}

func kind(v []byte) string {
	switch v[0] {
	case '{':
		return "an object"
	case '[':
		return "an array"
	case '"':
		return "a string"
	case 't', 'f':
		return "a boolean"
	case 'n':
		return "null"
	}
	return "a number"
}

// joinMessages joins an array of messages: strings as they are, objects
// as "role: content" (or "content" without a string role), null or missing
// content left out, all joined by "\n".
func joinMessages(v []byte) ([]byte, error) {
	var arr []json.RawMessage
	if err := json.Unmarshal(v, &arr); err != nil {
		return nil, err
	}
	var out []byte
	add := func(s string) {
		if out != nil {
			out = append(out, '\n')
		} else {
			out = []byte{}
		}
		out = append(out, s...)
	}
	for i, el := range arr {
		el = bytes.TrimSpace(el)
		switch el[0] {
		case '"':
			var s string
			if err := json.Unmarshal(el, &s); err != nil {
				return nil, err
			}
			add(s)
		case '{':
			// Members are decoded one by one so that a role that is
			// not a string is ignored rather than an error.
			var obj map[string]json.RawMessage
			if err := json.Unmarshal(el, &obj); err != nil {
				return nil, err
			}
			c := bytes.TrimSpace(obj["content"])
			if len(c) == 0 || c[0] == 'n' {
				continue
			}
			if c[0] != '"' {
				return nil, fmt.Errorf("message %d: content is %s, not text", i+1, kind(c))
			}
			var content, role string
			if err := json.Unmarshal(c, &content); err != nil {
				return nil, err
			}
			if json.Unmarshal(obj["role"], &role) == nil {
				add(role + ": " + content)
			} else {
				add(content)
			}
		default:
			return nil, fmt.Errorf("element %d is %s, not a message", i+1, kind(el))
		}
	}
	return out, nil
}

// json reads a JSON document: an array of records, or one record.
func (r *reader) json(in *bufio.Reader) error {
	path := newJSONPath(strings.Split(r.opt.Field, "."))
	// Skip a byte order mark and white space to see the first byte.
	if b, _ := in.Peek(3); bytes.Equal(b, bom) {
		in.Discard(3)
	}
	first := byte(0)
	for {
		c, err := in.ReadByte()
		if err != nil {
			break
		}
		if c != ' ' && c != '\t' && c != '\r' && c != '\n' {
			in.UnreadByte()
			first = c
			break
		}
	}
	dec := json.NewDecoder(in)
	fail := func(n int, where string, err error) error {
		if r.src.err != nil {
			return r.readFailed(n, where, r.src.err)
		}
		if errors.Is(err, io.ErrUnexpectedEOF) || err == io.EOF {
			return r.skip(n, ReasonTruncated, where+": unexpected end of JSON input", true)
		}
		return r.skip(n, ReasonMalformed, where+": "+err.Error(), true)
	}
	if first != '[' {
		var raw json.RawMessage
		if err := dec.Decode(&raw); err != nil {
			if err == io.EOF && r.src.err == nil {
				return r.skip(0, ReasonEmpty, "no JSON value", false)
			}
			return fail(0, "document", err)
		}
		if _, err := dec.Token(); err != io.EOF {
			return r.skip(0, ReasonMalformed, fmt.Sprintf("data after the top-level value at byte %d (JSON Lines should be named .jsonl)", dec.InputOffset()), true)
		}
		return r.record(0, FormatJSON, raw, path, func(msg string) string { return msg })
	}
	if _, err := dec.Token(); err != nil {
		return fail(0, "array", err)
	}
	n := 0
	for dec.More() {
		n++
		var raw json.RawMessage
		if err := dec.Decode(&raw); err != nil {
			return fail(n, "element "+strconv.Itoa(n), err)
		}
		el := n
		if e := r.record(n, FormatJSON, raw, path, func(msg string) string { return "element " + strconv.Itoa(el) + ": " + msg }); e != nil {
			return e
		}
	}
	if _, err := dec.Token(); err != nil {
		return fail(0, "after element "+strconv.Itoa(n), err)
	}
	if _, err := dec.Token(); err != io.EOF {
		return r.skip(0, ReasonMalformed, fmt.Sprintf("data after the top-level array at byte %d", dec.InputOffset()), true)
	}
	if n == 0 {
		return r.skip(0, ReasonEmpty, "empty array", false)
	}
	return nil
}

// jsonPrefixOK reports whether b, possibly cut short, tokenizes as JSON.
func jsonPrefixOK(b []byte) bool {
	dec := json.NewDecoder(bytes.NewReader(b))
	for {
		_, err := dec.Token()
		if err == io.EOF {
			return true
		}
		if err != nil {
			return errors.Is(err, io.ErrUnexpectedEOF)
		}
	}
}

func isASCII(b []byte) bool {
	for _, c := range b {
		if c >= utf8.RuneSelf {
			return false
		}
	}
	return true
}
