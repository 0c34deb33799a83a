package corpus

import "testing"

// The CSV texts follow the examples of RFC 4180, section 2.
func TestCSVRFC4180(t *testing.T) {
	tests := []struct {
		name, in, column string
		want             []string
	}{
		// Rule 3: an optional header line; rule 1: records end in CRLF.
		{"header", "field_name,field_name,field_name\r\naaa,bbb,ccc\r\nzzz,yyy,xxx\r\n", "field_name",
			[]string{`-:1@2 csv "aaa"`, `-:2@3 csv "zzz"`}},
		// Rule 2: the last record may lack the line break.
		{"no final break", "a,text,c\r\naaa,bbb,ccc\r\nzzz,yyy,xxx", "text",
			[]string{`-:1@2 csv "bbb"`, `-:2@3 csv "yyy"`}},
		// Rule 5: fields may be enclosed in double quotes.
		{"quoted", "a,text,c\r\n\"aaa\",\"bbb\",\"ccc\"\r\nzzz,yyy,xxx\r\n", "text",
			[]string{`-:1@2 csv "bbb"`, `-:2@3 csv "yyy"`}},
		// Rule 6: quoted fields may hold CRLF (encoding/csv turns it into LF);
		// the next record, row 2, starts on line 4.
		{"embedded CRLF", "a,text,c\r\n\"aaa\",\"b\r\nbb\",\"ccc\"\r\nzzz,yyy,xxx\r\n", "text",
			[]string{`-:1@2 csv "b\nbb"`, `-:2@4 csv "yyy"`}},
		// Rule 7: a double quote inside a quoted field is doubled.
		{"doubled quote", "a,text,c\r\n\"aaa\",\"b\"\"bb\",\"ccc\"\r\n", "text",
			[]string{`-:1@2 csv "b\"bb"`}},
		// Rule 4: spaces are part of a field.
		{"spaces", "a,text\r\n1, padded \r\n", "text", []string{`-:1@2 csv " padded "`}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			check(t, show(t, "", readBytes(t, []byte(tt.in), Options{Format: FormatCSV, Column: tt.column})), tt.want)
		})
	}
}

func TestCSVBadRows(t *testing.T) {
	in := "id,text\n1,first\n2,ragged,extra\n3\n4,\"bare \"quote\"\n5,\n6,\"multi\nline\"\n7,last\n"
	check(t, show(t, "", readBytes(t, []byte(in), Options{Format: FormatCSV})), []string{
		`-:1@2 csv "first"`,
		`-:2@3 !ragged`,
		`-:3@4 !ragged`,
		`-:4@5 !malformed`,
		`-:5@6 ~empty`,
		`-:6@7 csv "multi\nline"`,
		`-:7@9 csv "last"`,
	})
	items := readBytes(t, []byte(in), Options{Format: FormatCSV})
	if d := items[1].Skip.Detail; d != "row 2 (line 3): 3 fields, the header has 2" {
		t.Errorf("ragged detail = %q", d)
	}
	check(t, show(t, "", readBytes(t, []byte("id,body\n1,x\n"), Options{Format: FormatCSV, Column: "text"})), []string{`-:0 !no-field`})
	check(t, show(t, "", readBytes(t, []byte("id,TEXT\n"), Options{Format: FormatCSV})), []string{`-:0 ~empty`})
	check(t, show(t, "", readBytes(t, []byte("id\ttext\n1\tsay \"hi\"\n"), Options{Format: FormatTSV})), []string{`-:1@2 tsv "say \"hi\""`})
}
