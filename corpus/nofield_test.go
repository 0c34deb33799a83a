package corpus

import (
	"fmt"
	"strings"
	"testing"
)

// detailed renders items as show does, with a skip's detail and a
// document's note.
func detailed(t *testing.T, items []Item) []string {
	t.Helper()
	lines := show(t, "", items)
	for i, it := range items {
		if it.Skip != nil {
			lines[i] += " " + it.Skip.Detail
		} else if it.Doc.Note != "" {
			lines[i] += " note: " + it.Doc.Note
		}
	}
	return lines
}

// A JSON or JSON Lines file whose first record has no text field is one
// text document when the field was left to its default, and one skip that
// names the fields when it was asked for: not one failure a record.
func TestRecordsWithoutTheField(t *testing.T) {
	rows := `{"id": 1, "body": "first"}` + "\n\n" + `{"id": 2, "body": "second"}` + "\n"
	array := "[\n  " + `{"id": 1, "body": "first"}, {"id": 2, "body": "second"}` + "\n]\n"
	object := `{"name": "harbour-tools", "version": "1.0"}` + "\n"
	for _, c := range []struct {
		name, data, format, field string
		want                      []string
	}{
		{"jsonl default", rows, FormatJSONL, "", []string{
			fmt.Sprintf(`-:0 jsonl %q note: read as one text document: the first record has no field "text" (it has fields "body", "id")`, rows)}},
		{"json array default", array, FormatJSON, "", []string{
			fmt.Sprintf(`-:0 json %q note: read as one text document: the first value has no field "text" (it has fields "body", "id")`, array)}},
		{"json object default", object, FormatJSON, "", []string{
			fmt.Sprintf(`-:0 json %q note: read as one text document: the first value has no field "text" (it has fields "name", "version")`, object)}},
		{"jsonl asked", rows, FormatJSONL, "text", []string{
			`-:0 !no-field none of the 2 records has field "text" (the first record: it has fields "body", "id")`}},
		{"json array asked", array, FormatJSON, "meta.text", []string{
			`-:0 !no-field none of the 2 elements has field "meta.text" (the first element: it has fields "body", "id")`}},
		{"json object asked", object, FormatJSON, "text", []string{
			`-:0 !no-field no field "text" (it has fields "name", "version")`}},
		{"jsonl asked, found", rows, FormatJSONL, "body", []string{`-:1 jsonl "first"`, `-:3 jsonl "second"`}},
		{"jsonl default, first has it", `{"text": "a"}` + "\n" + `{"id": 2}` + "\n", FormatJSONL, "", []string{
			`-:1 jsonl "a"`, `-:2 !no-field line 2: no field "text"`}},
		// Records without the field before and after one with it are
		// each a skip, in input order.
		{"jsonl asked, some", `{"a": 1}` + "\n" + `{"a": 2}` + "\n" + `{"body": "x"}` + "\n" + `{"a": 3}` + "\n", FormatJSONL, "body", []string{
			`-:1 !no-field line 1: no field "body"`, `-:2 !no-field line 2: no field "body"`,
			`-:3 jsonl "x"`, `-:4 !no-field line 4: no field "body"`}},
		{"json asked, nested", `[{"meta": 3}]`, FormatJSON, "meta.text", []string{
			`-:0 !no-field none of the 1 elements has field "meta.text" (the first element: its "meta" is a number)`}},
	} {
		t.Run(c.name, func(t *testing.T) {
			check(t, detailed(t, readBytes(t, []byte(c.data), Options{Format: c.format, Field: c.field})), c.want)
		})
	}
}

// A file read as text because of its first record is read whole, also
// when it is longer than what is held in memory.
func TestRecordsWithoutTheFieldStreamed(t *testing.T) {
	data := strings.Repeat(`{"id": 7, "body": "the keeper trims the wick"}`+"\n", 200)
	items := readBytes(t, []byte(data), Options{Format: FormatJSONL, StreamAbove: 1000})
	check(t, show(t, "", items), []string{fmt.Sprintf(`-:0 jsonl %q`, data)})
}
