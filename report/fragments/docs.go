package fragments

import (
	"bufio"
	"bytes"
	"container/heap"
	"encoding/binary"
	"encoding/json"
	"io"
	"iter"
	"strconv"

	"morsel/report"
	"morsel/report/render"
)

// DocList is the fertility of every document, in input order, in a few
// bytes a document: the names as runs of consecutive records
// (report.Names), the figures as varints. A million JSON Lines records
// cost a few megabytes instead of a hundred. The zero value is empty.
type DocList struct {
	names report.Names
	data  []byte // a document's tokens, words, word tokens and one-token words, as uvarints
	n     int
}

// add appends the document source (record) of tokens tokens and words all.
func (l *DocList) add(source string, record, tokens int, all ScriptTally) {
	l.names.Add(source, record)
	for _, v := range [...]int64{int64(tokens), all.Words, all.Tokens, all.OneToken} {
		l.data = binary.AppendUvarint(l.data, uint64(v))
	}
	l.n++
}

// Len returns the number of documents.
func (l *DocList) Len() int { return l.n }

// All returns the documents in input order.
func (l *DocList) All() iter.Seq[DocFertility] {
	return func(yield func(DocFertility) bool) {
		data := l.data
		next := func() int64 {
			v, n := binary.Uvarint(data)
			data = data[n:]
			return int64(v)
		}
		for i := range l.n {
			source, record := l.names.At(i)
			tokens, words, wordTokens, one := next(), next(), next(), next()
			d := DocFertility{Source: source, SourceBytes: report.SourceBytes(source), Record: record, Tokens: int(tokens),
				Words: words, WordTokens: wordTokens, Fertility: report.Round2(report.Per(float64(wordTokens), float64(words))),
				OneTokenShare: round4(report.Per(float64(one), float64(words)))}
			if !yield(d) {
				return
			}
		}
	}
}

// MarshalJSON writes the list as encoding/json writes a []DocFertility
// without escaping HTML, as render.WriteJSON does. The JSON view does not
// call it: it writes the rows one at a time (writeJSON).
func (l DocList) MarshalJSON() ([]byte, error) {
	docs := []DocFertility{}
	for d := range l.All() {
		docs = append(docs, d)
	}
	var b bytes.Buffer
	e := json.NewEncoder(&b)
	e.SetEscapeHTML(false)
	err := e.Encode(docs)
	return b.Bytes(), err
}

// mostFertile returns the rows documents of the most tokens per word
// (all of them when rows is 0), the most first and in input order on a
// tie, keeping no more than rows of them at a time.
func (l *DocList) mostFertile(rows int) []DocFertility {
	h := &fertileHeap{}
	i := 0
	for d := range l.All() {
		e := rankedDoc{d, i}
		i++
		switch {
		case rows <= 0 || len(h.docs) < rows:
			heap.Push(h, e)
		case h.better(e, h.docs[0]):
			h.docs[0] = e
			heap.Fix(h, 0)
		}
	}
	out := make([]DocFertility, len(h.docs))
	for k := len(out) - 1; k >= 0; k-- {
		out[k] = heap.Pop(h).(rankedDoc).DocFertility
	}
	return out
}

type rankedDoc struct {
	DocFertility
	at int // its place in input order
}

// fertileHeap holds documents with the one that ranks last at its root.
type fertileHeap struct{ docs []rankedDoc }

// better reports whether a ranks before b: more tokens per word, then
// earlier in input order.
func (h *fertileHeap) better(a, b rankedDoc) bool {
	if a.Fertility != b.Fertility {
		return a.Fertility > b.Fertility
	}
	return a.at < b.at
}

func (h *fertileHeap) Len() int           { return len(h.docs) }
func (h *fertileHeap) Less(i, j int) bool { return h.better(h.docs[j], h.docs[i]) }
func (h *fertileHeap) Swap(i, j int)      { h.docs[i], h.docs[j] = h.docs[j], h.docs[i] }
func (h *fertileHeap) Push(x any)         { h.docs = append(h.docs, x.(rankedDoc)) }
func (h *fertileHeap) Pop() any {
	d := h.docs[len(h.docs)-1]
	h.docs = h.docs[:len(h.docs)-1]
	return d
}

// docsMark is where the JSON view of a report whose DocList is empty
// holds the list: the last member of "fertility", before "terms", at the
// indent render.WriteJSON gives it. No string can hold it, since a JSON
// string holds no line break.
const docsMark = "\n    \"documents\": []\n  },\n  \"terms\": "

// writeJSON writes r as render.WriteJSON does, with the documents' rows
// written one at a time from the DocList rather than held as one value.
func writeJSON(w io.Writer, r *Report) error {
	head := *r
	head.Fertility.Documents = DocList{}
	var buf bytes.Buffer
	if err := render.WriteJSON(&buf, &head); err != nil {
		return err
	}
	b := buf.Bytes()
	at := bytes.Index(b, []byte(docsMark))
	if at < 0 || r.Fertility.Documents.Len() == 0 {
		_, err := w.Write(b)
		return err
	}
	bw := bufio.NewWriterSize(w, 64<<10)
	bw.Write(b[:at])
	bw.WriteString("\n    \"documents\": [")
	var row []byte
	var last, quoted string
	n := 0
	for d := range r.Fertility.Documents.All() {
		if d.Source != last || n == 0 {
			q, err := quoteJSON(d.Source)
			if err != nil {
				return err
			}
			last, quoted = d.Source, q
		}
		if n > 0 {
			bw.WriteString(",")
		}
		n++
		var err error
		if row, err = appendDocRow(row[:0], d, quoted); err != nil {
			return err
		}
		bw.Write(row)
	}
	bw.WriteString("\n    ]")
	bw.Write(b[at+len("\n    \"documents\": []"):])
	return bw.Flush()
}

// appendDocRow appends d as an element of the documents array at its
// indent, as encoding/json writes it; source is d.Source in JSON.
func appendDocRow(b []byte, d DocFertility, source string) ([]byte, error) {
	const in = "\n        "
	b = append(b, "\n      {"+in+`"source": `...)
	b = append(b, source...)
	if d.SourceBytes != "" {
		b = append(b, ","+in+`"source_bytes": "`...) // base64: nothing to escape
		b = append(b, d.SourceBytes...)
		b = append(b, '"')
	}
	for _, f := range [...]struct {
		name string
		n    int64
	}{{"record", int64(d.Record)}, {"tokens", int64(d.Tokens)}, {"words", d.Words}, {"word_tokens", d.WordTokens}} {
		b = append(b, ","+in+`"`...)
		b = append(b, f.name...)
		b = append(b, `": `...)
		b = strconv.AppendInt(b, f.n, 10)
	}
	for _, f := range [...]struct {
		name string
		x    float64
	}{{"fertility", d.Fertility}, {"one_token_share", d.OneTokenShare}} {
		b = append(b, ","+in+`"`...)
		b = append(b, f.name...)
		b = append(b, `": `...)
		var err error
		if b, err = render.AppendJSONFloat(b, f.x); err != nil {
			return b, err
		}
	}
	return append(b, "\n      }"...), nil
}

// quoteJSON returns s as render.WriteJSON writes a string.
func quoteJSON(s string) (string, error) {
	var b bytes.Buffer
	e := json.NewEncoder(&b)
	e.SetEscapeHTML(false)
	if err := e.Encode(s); err != nil {
		return "", err
	}
	return string(bytes.TrimSuffix(b.Bytes(), []byte("\n"))), nil
}
