package corpus

import (
	"bufio"
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"sort"
	"strconv"
	"strings"
	"unicode/utf8"

	"morsel/internal/textfile"
)

// jsonl reads one record per line.
func (r *reader) jsonl(in *bufio.Reader) error {
	rs := &records{r: r, format: FormatJSONL, path: newJSONPath(strings.Split(r.opt.Field, ".")),
		where: lineDetail}
	var buf []byte
	// prefix keeps the bytes read until the first record is judged, to
	// read the file as one text document if that record says so.
	prefix, keep := []byte(nil), true
	line, records := 0, 0
	tooLarge := false
	for {
		chunk, err := in.ReadSlice('\n')
		if keep {
			if prefix = append(prefix, chunk...); int64(len(prefix)) > r.opt.MaxRecord {
				prefix, keep = nil, false
			}
		}
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
			keep = false
			if e := rs.flush(); e != nil {
				return e
			}
			rs.others = true
			if e := r.skip(line, ReasonTooLarge, lineDetail(line, fmt.Sprintf("longer than %d bytes", r.opt.MaxRecord)), true); e != nil {
				return e
			}
		} else if rec = bytes.TrimSpace(rec); len(rec) > 0 {
			records++
			var e error
			if rs.passes(line) {
				e = rs.pass()
			} else {
				e = rs.add(line, rec)
			}
			if e == errAsText && keep {
				return r.text(io.MultiReader(bytes.NewReader(prefix), in), FormatJSONL, r.size, rs.textNote(rec))
			}
			if e == errAsText { // too long to read again: one document a record after all
				e = r.skip(line, ReasonNoField, lineDetail(line, fmt.Sprintf("no field %q", r.opt.Field)), true)
			}
			if e != nil {
				return e
			}
			prefix, keep = nil, false
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
	return rs.finish()
}

// textNote is the Note of a file read as one text document because its
// first record, rec, has no text field.
func (rs *records) textNote(rec []byte) string {
	noun := "record"
	if rs.format == FormatJSON {
		noun = "value"
	}
	return fmt.Sprintf("read as one text document: the first %s has no field %q (%s)",
		noun, strings.Join(rs.path.names, "."), fieldsAt(rec, rs.path.names))
}

// records turns a file's JSON records into documents and skips. It judges
// the file by its first record: when that has no value where the text
// field's path leads and the field was not asked for, the whole file is
// one text document. When the field was asked for, records without it are
// held back while no other item comes between them, so that a file none of
// whose records has the field gives one skip, which names the fields the
// first record has, instead of one skip a record.
type records struct {
	r      *reader
	format string
	path   jsonPath
	// where turns a message into a Detail naming record n's place.
	where func(n int, msg string) string
	seen  bool // a record has been judged
	// held are runs of record numbers without the field, all with the
	// message heldMsg; heldN counts them; heldFields is what the first of
	// them has.
	held       [][2]int
	heldN      int
	heldMsg    string
	heldFields string
	// others is set once an item other than a held record was emitted.
	others bool
	owner  *Owner // of Options.Shard, once a record may be passed over
}

// passes reports whether record n may be passed over unread: it belongs
// to another share of Options.Shard, the file has been judged by its
// first record, and nothing a later record holds can change how the items
// of this share read. That last holds always for the default field, and
// for an asked field once an item other than a held record has come: from
// then on every held record becomes a skip of its own, in record order,
// whatever the records after it hold.
func (rs *records) passes(n int) bool {
	if rs.r.opt.Shard.Whole() || !rs.seen || !rs.others && rs.r.fieldAsked {
		return false
	}
	if rs.owner == nil {
		rs.owner = NewOwner(rs.r.opt.Shard)
	}
	return !rs.owner.Owns(rs.r.source, n)
}

// pass emits the place of a record passed over, after the held records
// before it, which would have been emitted before it too.
func (rs *records) pass() error {
	if err := rs.flush(); err != nil {
		return err
	}
	return rs.r.fn(Item{})
}

// errAsText is returned by records.add when the file is to be read as one
// text document instead.
var errAsText = errors.New("read as text")

// add checks record n and emits its document or skip. It returns errAsText
// for a first record that says the file is text.
func (rs *records) add(n int, rec []byte) error {
	text, reason, msg, valid, absent := recordText(rec, rs.path)
	first := !rs.seen
	rs.seen = true
	if absent {
		if first && !rs.r.fieldAsked {
			return errAsText
		}
		if rs.r.fieldAsked {
			return rs.hold(n, rec, msg)
		}
	}
	if err := rs.flush(); err != nil {
		return err
	}
	rs.others = true
	r := rs.r
	if !valid {
		var v any
		err := json.Unmarshal(rec, &v)
		msg := "invalid JSON"
		if err != nil {
			msg = err.Error()
		}
		return r.skip(n, ReasonMalformed, rs.where(n, msg), true)
	}
	if reason != "" {
		return r.skip(n, reason, rs.where(n, msg), reason != ReasonEmpty)
	}
	return r.doc(&Document{Record: n, Format: rs.format, Text: text, Size: int64(len(text))})
}

func (rs *records) hold(n int, rec []byte, msg string) error {
	if rs.heldN > 0 && msg != rs.heldMsg {
		if err := rs.flush(); err != nil {
			return err
		}
	}
	if rs.heldN == 0 {
		rs.heldMsg, rs.heldFields = msg, fieldsAt(rec, rs.path.names)
	}
	if k := len(rs.held) - 1; k >= 0 && rs.held[k][1] == n-1 {
		rs.held[k][1] = n
	} else {
		rs.held = append(rs.held, [2]int{n, n})
	}
	rs.heldN++
	return nil
}

// flush emits the held records one skip each: another item came after
// them, so some record of the file is not like them.
func (rs *records) flush() error {
	for _, run := range rs.held {
		for n := run[0]; n <= run[1]; n++ {
			if err := rs.r.skip(n, ReasonNoField, rs.where(n, rs.heldMsg), true); err != nil {
				return err
			}
		}
	}
	rs.held, rs.heldN = rs.held[:0], 0
	return nil
}

// finish ends the file: records held to its end become one skip for the
// file when nothing else came before them, else one skip each.
func (rs *records) finish() error {
	if rs.heldN == 0 {
		return nil
	}
	if rs.others {
		return rs.flush()
	}
	noun := "record"
	if rs.format == FormatJSON {
		noun = "element"
	}
	detail := fmt.Sprintf("none of the %d %ss has field %q (the first %s: %s)", rs.heldN, noun, strings.Join(rs.path.names, "."), noun, rs.heldFields)
	rs.held, rs.heldN = rs.held[:0], 0
	return rs.r.skip(0, ReasonNoField, detail, true)
}

// fieldsAt says what a record holds where the path stops: "it has fields
// ..." for an object without the next part, "its "meta" is a number" for
// a value that is not an object or array.
func fieldsAt(rec []byte, path []string) string {
	where := "it"
	v := json.RawMessage(rec)
	for i, part := range path {
		v = bytes.TrimSpace(v)
		if len(v) == 0 {
			break
		}
		if i > 0 {
			where = "its " + strconv.Quote(strings.Join(path[:i], "."))
		}
		switch v[0] {
		case '{':
			var obj map[string]json.RawMessage
			if json.Unmarshal(v, &obj) != nil {
				return where + " does not parse"
			}
			next, ok := obj[part]
			if !ok {
				return where + " has " + listNames(obj)
			}
			v = next
		case '[':
			var arr []json.RawMessage
			if json.Unmarshal(v, &arr) != nil {
				return where + " does not parse"
			}
			k, err := strconv.Atoi(part)
			if err != nil || k < 0 || k >= len(arr) {
				return fmt.Sprintf("%s is an array of %d", where, len(arr))
			}
			v = arr[k]
		default:
			return where + " is " + kind(v)
		}
	}
	return where + " has it"
}

// maxNamesListed bounds the field or column names a skip lists.
const maxNamesListed = 20

func listNames(obj map[string]json.RawMessage) string {
	if len(obj) == 0 {
		return "no fields"
	}
	names := make([]string, 0, len(obj))
	for k := range obj {
		names = append(names, k)
	}
	sort.Strings(names)
	return "fields " + joinNames(names)
}

// joinNames lists names, quoted, up to maxNamesListed of them.
func joinNames(names []string) string {
	var b strings.Builder
	for i, n := range names {
		if i == maxNamesListed {
			fmt.Fprintf(&b, " and %d more", len(names)-i)
			break
		}
		if i > 0 {
			b.WriteString(", ")
		}
		b.WriteString(strconv.Quote(n))
	}
	return b.String()
}

// recordText checks that rec is valid JSON and finds its text by the rules
// in the package comment, returning the text or a reason and a message. A
// string where the path leads, the common case, is found and decoded in
// one pass over the record; anything else is left to fieldText.
// absent is set when the record is an object or array where the path
// leads to no value at all (not even null).
func recordText(rec []byte, path jsonPath) (text []byte, reason, msg string, valid, absent bool) {
	val, plain, valid := findValue(rec, path)
	if !valid {
		return nil, "", "", false, false
	}
	if rec[0] == '"' {
		val = rec // a record that is a string is its own text
		plain = bytes.IndexByte(rec, '\\') < 0 && isASCII(rec)
	}
	if len(val) == 0 || val[0] != '"' {
		text, reason, msg = fieldText(rec, path.names)
		return text, reason, msg, true, val == nil && (rec[0] == '{' || rec[0] == '[')
	}
	if text = stringText(val, plain); len(text) == 0 {
		return nil, ReasonEmpty, fmt.Sprintf("field %q is empty", strings.Join(path.names, ".")), true, false
	}
	return text, "", "", true, false
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
	rs := &records{r: r, format: FormatJSON, path: newJSONPath(strings.Split(r.opt.Field, ".")),
		where: func(n int, msg string) string {
			if n == 0 {
				return msg
			}
			return "element " + strconv.Itoa(n) + ": " + msg
		}}
	// k keeps the bytes read until the first value is judged, to read the
	// file as one text document if that value says so.
	k := &keeper{r: in, max: r.opt.MaxRecord, keep: true}
	asText := func(raw []byte) error {
		if !k.keep {
			return r.skip(0, ReasonNoField, fmt.Sprintf("no field %q", r.opt.Field), true)
		}
		return r.text(io.MultiReader(bytes.NewReader(k.buf), in), FormatJSON, r.size, rs.textNote(raw))
	}
	// Skip a byte order mark and white space to see the first byte.
	if b, _ := in.Peek(3); bytes.Equal(b, bom) {
		in.Discard(3)
		k.buf = append(k.buf, bom...)
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
		k.buf = append(k.buf, c)
	}
	dec := json.NewDecoder(k)
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
		if _, _, msg, _, absent := recordText(raw, rs.path); absent {
			if !r.fieldAsked {
				return asText(raw)
			}
			return r.skip(0, ReasonNoField, msg+" ("+fieldsAt(raw, rs.path.names)+")", true)
		}
		return rs.add(0, raw)
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
		e := rs.add(n, raw)
		if e == errAsText {
			return asText(raw)
		}
		k.stop()
		if e != nil {
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
	return rs.finish()
}

// keeper reads from r and, while keep is set, keeps what it read in buf,
// up to max bytes (past which it stops keeping).
type keeper struct {
	r    io.Reader
	buf  []byte
	max  int64
	keep bool
}

func (k *keeper) Read(p []byte) (int, error) {
	n, err := k.r.Read(p)
	if k.keep {
		if k.buf = append(k.buf, p[:n]...); int64(len(k.buf)) > k.max {
			k.stop()
		}
	}
	return n, err
}

func (k *keeper) stop() { k.buf, k.keep = nil, false }

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
