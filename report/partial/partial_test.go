package partial

import (
	"bytes"
	"encoding/json"
	"math/rand"
	"reflect"
	"strings"
	"testing"

	"morsel/corpus"
)

func sample(k, n int) *Partial {
	p := New("survey", k, n, "sha256:in", map[string]string{"vocabulary": "sha256:v"})
	p.Items = []Item{
		{Key: Key{In: -1, Seq: 0, Src: "missing.txt"}, Skip: &Skip{Reason: "unreadable", Detail: "no such file", Failed: true}},
		{Key: Key{In: 0, Seq: 0, Src: "a.jsonl"}, Record: 1, Format: "jsonl", Result: json.RawMessage(`{"tokens":3}`)},
		{Key: Key{In: 0, Seq: 1, Src: "a.jsonl"}, Record: 2, Format: "jsonl", Err: "stream cut"},
	}
	p.Tables["words"] = []json.RawMessage{json.RawMessage(`["alpha",2]`), json.RawMessage(`["beta",1]`)}
	p.Summary = json.RawMessage(`{"documents":1}`)
	return p
}

func encode(t *testing.T, p *Partial) []byte {
	t.Helper()
	var b bytes.Buffer
	if err := p.Write(&b); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

func TestRoundTrip(t *testing.T) {
	p := sample(2, 7)
	q, err := Read(bytes.NewReader(encode(t, p)), "a.partial")
	if err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(p, q) {
		t.Fatalf("read back\n%+v\nwrote\n%+v", q, p)
	}
}

func TestReadRefuses(t *testing.T) {
	good := encode(t, sample(1, 2))
	cut := good[:len(good)-12]
	other := sample(1, 2)
	other.Header.Version = 99
	var plain bytes.Buffer
	plain.WriteString(`{"h":{"format":"morsel-partial"}}`)
	for _, c := range []struct {
		name string
		data []byte
		want string
	}{
		{"cut", cut, "x.partial"},
		{"not gzip", plain.Bytes(), "not a partial report"},
		{"version", encodeRaw(t, other), "version 99"},
		{"empty", nil, "not a partial report"},
		{"no end", gz(t, `{"h":{"format":"morsel-partial","version":1,"command":"survey","shards":[1],"of":1}}`+"\n"), "cut short"},
		{"bad count", gz(t, `{"h":{"format":"morsel-partial","version":1,"command":"survey","shards":[1],"of":1}}`+"\n"+`{"end":{"items":2}}`+"\n"), "counts 2 items"},
		{"bad shard", gz(t, `{"h":{"format":"morsel-partial","version":1,"command":"survey","shards":[3],"of":2}}`+"\n"), "bad shard list"},
		{"junk line", gz(t, `{"h":{"format":"morsel-partial","version":1,"command":"survey","shards":[1],"of":1}}`+"\n{nope\n"), "x.partial:2"},
	} {
		_, err := Read(bytes.NewReader(c.data), "x.partial")
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: error %v, want one saying %q", c.name, err, c.want)
		}
	}
}

// encodeRaw writes p without the Writer's fixing of format and version.
func encodeRaw(t *testing.T, p *Partial) []byte {
	h, _ := json.Marshal(line{H: &p.Header})
	return gz(t, string(h)+"\n"+`{"end":{"items":0}}`+"\n")
}

func gz(t *testing.T, s string) []byte {
	var b bytes.Buffer
	w, err := NewWriter(&b, Header{})
	if err != nil {
		t.Fatal(err)
	}
	// Replace what NewWriter wrote with the raw text.
	b.Reset()
	w.zw.Reset(&b)
	w.zw.Write([]byte(s))
	w.zw.Close()
	return b.Bytes()
}

func TestMergeRefuses(t *testing.T) {
	a, b := sample(1, 2), sample(2, 2)
	names := []string{"a.partial", "b.partial"}
	vocab := sample(2, 2)
	vocab.Header.Agree["vocabulary"] = "sha256:w"
	frame := sample(2, 2)
	frame.Header.Agree["frame"] = "sha256:f"
	inputs := sample(2, 2)
	inputs.Header.Inputs = "sha256:other"
	cmd := sample(2, 2)
	cmd.Header.Command = "fit"
	of := sample(2, 3)
	for _, c := range []struct {
		name  string
		ps    []*Partial
		whole bool
		want  string
	}{
		{"vocabulary", []*Partial{a, vocab}, true, "differ in vocabulary: sha256:v and sha256:w"},
		{"frame", []*Partial{a, frame}, true, "differ in frame: (none) and sha256:f"},
		{"inputs", []*Partial{a, inputs}, true, "different inputs"},
		{"command", []*Partial{a, cmd}, true, "a survey report, the other a fit report"},
		{"shard count", []*Partial{a, of}, true, "cut into 2 shards, the other into 3"},
		{"twice", []*Partial{a, sample(1, 2)}, true, "both hold shard 1/2"},
		{"missing", []*Partial{a}, true, "shard 2 of 2 missing"},
	} {
		_, err := Merge(c.ps, names[:len(c.ps)], c.whole)
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: error %v, want one saying %q", c.name, err, c.want)
		}
	}
	if m, err := Merge([]*Partial{b, a}, names, true); err != nil || !reflect.DeepEqual(m.Header.Shards, []int{1, 2}) || len(m.Items) != 6 {
		t.Errorf("merge of both shards: %v, %+v", err, m)
	}
	if _, err := Merge([]*Partial{a}, names[:1], false); err != nil {
		t.Errorf("a part of a run, not asked to be whole: %v", err)
	}
}

// Keys sort into the order a walk of folders gives, whatever order the
// shards hand them over in.
func TestKeyOrderIsWalkOrder(t *testing.T) {
	var want []Key
	visit := func(it corpus.Item) error {
		src := ""
		if it.Doc != nil {
			src = it.Doc.Source
			if it.Doc.Stream != nil {
				it.Doc.Stream.Close()
			}
		} else {
			src = it.Skip.Source
		}
		seq := 0
		if n := len(want); n > 0 && want[n-1].Src == src {
			seq = want[n-1].Seq + 1
		}
		want = append(want, Key{Src: src, Seq: seq})
		return nil
	}
	ins, _ := corpus.List([]string{"../../testdata"}, corpus.Options{Hidden: true})
	for _, in := range ins {
		if err := corpus.Read(in, corpus.Options{}, visit); err != nil {
			t.Fatal(err)
		}
	}
	if len(want) < 50 {
		t.Fatalf("only %d items walked", len(want))
	}
	tricky := 0
	for i := 1; i < len(want); i++ {
		if want[i-1].Src != want[i].Src && want[i-1].Src > want[i].Src {
			tricky++ // plain string order would put these the other way round
		}
	}
	got := append([]Key(nil), want...)
	rand.New(rand.NewSource(1)).Shuffle(len(got), func(i, j int) { got[i], got[j] = got[j], got[i] })
	p := &Partial{}
	for _, k := range got {
		p.Items = append(p.Items, Item{Key: k})
	}
	p.Sort()
	for i, it := range p.Items {
		if it.Key != want[i] {
			t.Fatalf("item %d: %+v, walk order has %+v (%d pairs out of plain string order)", i, it.Key, want[i], tricky)
		}
	}
	if tricky == 0 {
		t.Log("no pair of paths here sorts differently as plain strings")
	}
}

func TestComparePaths(t *testing.T) {
	for _, c := range []struct {
		a, b string
		want int
	}{
		{"a/b", "a-c", -1}, {"a/b", "a.b", -1}, {"a", "a/b", -1}, {"ab", "a/z", 1}, {"x", "x", 0}, {"b", "a/z", 1},
	} {
		if got := comparePaths(c.a, c.b); sign(got) != c.want {
			t.Errorf("comparePaths(%q, %q) = %d, want %d", c.a, c.b, got, c.want)
		}
	}
}

func sign(x int) int {
	switch {
	case x < 0:
		return -1
	case x > 0:
		return 1
	}
	return 0
}
