package partial

import (
	"bytes"
	"compress/gzip"
	"encoding/binary"
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
		{Key: Key{In: 0, Seq: 0, Src: "a.jsonl"}, Record: 1, Format: "jsonl", Hash: 1<<63 + 5, Result: []byte{3, 0, 200, 1}},
		{Key: Key{In: 0, Seq: 1, Src: "a.jsonl"}, Record: 2, Format: "jsonl", Err: "stream cut"},
		{Key: Key{In: 0, Seq: 2, Src: "a.jsonl"}, Record: 3, Skip: &Skip{Reason: "empty", Detail: "line 3: field \"text\" is empty"}},
		{Key: Key{In: 1, Seq: 0, Src: "b.csv"}, Record: 4, Line: 9, Format: "csv", Result: []byte(`{"tokens":3}`)},
		{Key: Key{In: 2, Seq: 0, Src: "\xffodd name"}, Result: []byte{}},
	}
	p.Tables["words"] = []json.RawMessage{json.RawMessage(`["alpha",2]`), json.RawMessage(`["beta",1]`)}
	p.Summary = json.RawMessage(`{"documents":1}`)
	return p
}

func encode(t testing.TB, p *Partial, compress bool) []byte {
	t.Helper()
	var b bytes.Buffer
	if err := p.Write(&b, compress); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

func TestRoundTrip(t *testing.T) {
	for _, compress := range []bool{false, true} {
		p := sample(2, 7)
		b := encode(t, p, compress)
		if gz := len(b) > 2 && b[0] == 0x1f && b[1] == 0x8b; gz != compress {
			t.Errorf("compress %v: gzip stream %v", compress, gz)
		}
		q, err := Read(bytes.NewReader(b), "a.partial")
		if err != nil {
			t.Fatal(err)
		}
		if !reflect.DeepEqual(p, q) {
			t.Fatalf("compress %v: read back\n%+v\nwrote\n%+v", compress, q, p)
		}
	}
}

// frames builds a partial's bytes from the magic line and raw frames.
func frames(magic string, fs ...string) []byte {
	b := []byte(magic)
	for _, f := range fs {
		b = append(b, f[0])
		b = binary.AppendUvarint(b, uint64(len(f)-1))
		b = append(b, f[1:]...)
	}
	return b
}

func gzipped(t *testing.T, b []byte) []byte {
	var out bytes.Buffer
	zw := gzip.NewWriter(&out)
	zw.Write(b)
	zw.Close()
	return out.Bytes()
}

func TestReadRefuses(t *testing.T) {
	good := encode(t, sample(1, 2), false)
	const magic = "morsel-partial 2\n"
	header := `h{"format":"morsel-partial","version":2,"command":"survey","shards":[1],"of":1}`
	endOne := `e{"items":1}`
	other := sample(1, 2)
	other.Header.Version = 99
	otherHeader, _ := json.Marshal(other.Header)
	for _, c := range []struct {
		name string
		data []byte
		want string
	}{
		{"cut", good[:len(good)-12], "x.partial: frame"},
		{"not a partial", []byte("plain text\n"), "not a partial report"},
		{"bad gzip", []byte{0x1f, 0x8b, 1, 2}, "not a partial report"},
		{"empty", nil, "not a partial report"},
		{"version 1", gzipped(t, []byte(`{"h":{"format":"morsel-partial","version":1,"command":"survey"}}`+"\n")), "version 1; this build reads version 2 only"},
		{"magic version", frames("morsel-partial 3\n"), "version 3; this build reads version 2"},
		{"header version", frames(magic, "h"+string(otherHeader)), "version 99"},
		{"no header", frames(magic, endOne), "first frame is not a header"},
		{"no end", frames(magic, header), "cut short"},
		{"bad count", frames(magic, header, `e{"items":2}`), "counts 2 items"},
		{"bad shard", frames(magic, `h{"format":"morsel-partial","version":2,"command":"survey","shards":[3],"of":2}`), "bad shard list"},
		{"unknown frame", frames(magic, header, "zjunk"), "x.partial: frame 2: a frame of no known kind"},
		{"item kinds", frames(magic, header, "i\x07\x00\x00\x00\x00\x00\x00"+strings.Repeat("\x00", 8), endOne), "frame 2: an item that is not one"},
		{"item cut", frames(magic, header, "i\x08\x00\x00\x02a", endOne), "frame 2: item 1: cut short"},
		{"skip tail", frames(magic, header, "i\x31\x00\x00\x00\x00"+strings.Repeat("\x00", 8)+"\x01r\x00xx", endOne), "bytes after the skip"},
		{"row", frames(magic, header, "t\x05words{nope", endOne), "table words: a row that is not JSON"},
		{"after end", frames(magic, header, `e{"items":0}`, `e{"items":0}`), "data after the end frame"},
		{"huge frame", append(frames(magic, header), 'i', 0xff, 0xff, 0xff, 0xff, 0x0f), "past the largest"},
	} {
		_, err := Read(bytes.NewReader(c.data), "x.partial")
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: error %v, want one saying %q", c.name, err, c.want)
		}
	}
}

// FuzzRead feeds damaged partials to Read: it refuses or reads, and what
// it reads writes back to the same partial.
func FuzzRead(f *testing.F) {
	f.Add(encode(f, sample(1, 2), false))
	f.Add(encode(f, sample(2, 3), true))
	f.Fuzz(func(t *testing.T, data []byte) {
		p, err := Read(bytes.NewReader(data), "fuzz")
		c, cerr := ReadForMerge(bytes.NewReader(data), "fuzz")
		if (err == nil) != (cerr == nil) || err != nil && err.Error() != cerr.Error() {
			t.Fatalf("Read: %v; ReadForMerge: %v", err, cerr)
		}
		if err != nil {
			return
		}
		var items []Item
		c.Each(func(it *Item) error { items = append(items, *it); return nil })
		if len(items) != len(p.Items) || len(items) > 0 && !reflect.DeepEqual(items, p.Items) {
			t.Fatalf("ReadForMerge gives\n%+v\nRead gives\n%+v", items, p.Items)
		}
		q, err := Read(bytes.NewReader(encode(t, p, false)), "again")
		if err != nil {
			t.Fatalf("a partial read back does not read again: %v", err)
		}
		if !reflect.DeepEqual(p, q) {
			t.Fatalf("read, written and read again:\n%+v\n%+v", q, p)
		}
	})
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
	if m, err := Merge([]*Partial{b, a}, names, true); err != nil || !reflect.DeepEqual(m.Header.Shards, []int{1, 2}) || m.Len() != 12 {
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

// Merging the shards' items, each run in order or not, gives the order a
// full sort gives.
func TestMergeItemsIsSort(t *testing.T) {
	rng := rand.New(rand.NewSource(3))
	for _, k := range []int{1, 2, 3, 7, 16, 40} {
		var all []Item
		for i := 0; i < 500; i++ {
			all = append(all, Item{Key: Key{In: rng.Intn(4) - 1, Seq: rng.Intn(50), Src: []string{"a", "a/b", "a-b", "a.b", "b"}[rng.Intn(5)]}, Record: i})
		}
		ps := make([]*Partial, k)
		for i := range ps {
			ps[i] = &Partial{}
		}
		for _, it := range all {
			p := ps[rng.Intn(k)]
			p.Items = append(p.Items, it)
		}
		for i, p := range ps {
			if i%3 != 2 { // every third left out of order
				p.Sort()
			}
		}
		want := &Partial{Items: append([]Item(nil), all...)}
		want.Sort()
		var got []Item
		m := &Partial{runs: sortedRuns(ps)}
		m.Each(func(it *Item) error { got = append(got, *it); return nil })
		if m.Len() != len(all) {
			t.Fatalf("%d runs: Len %d, want %d", k, m.Len(), len(all))
		}
		if len(got) != len(all) {
			t.Fatalf("%d runs: %d items, want %d", k, len(got), len(all))
		}
		for i := range got {
			if got[i].Key != want.Items[i].Key {
				t.Fatalf("%d runs: item %d is %+v, a sort gives %+v", k, i, got[i].Key, want.Items[i].Key)
			}
		}
	}
}

// A partial read for a merge gives, through Each and Len, the items Read
// gives, in blocks or not, with skips, errors and results small and large;
// one out of order is sorted as Read's would be.
func TestReadForMerge(t *testing.T) {
	rng := rand.New(rand.NewSource(5))
	for _, n := range []int{0, 1, 300, 2*recBlock + 17} {
		var all []Item
		for i := 0; i < n; i++ {
			it := Item{Key: Key{In: i / 100, Seq: i % 100, Src: []string{"a", "a/b", "b"}[i/100%3]}, Record: i, Line: rng.Intn(9), Format: []string{"jsonl", "csv"}[rng.Intn(2)], Hash: rng.Uint64()}
			switch rng.Intn(10) {
			case 0:
				it.Skip = &Skip{Reason: "empty", Detail: "line 3", Failed: rng.Intn(2) == 0}
			case 1:
				it.Err = "stream cut"
			case 2:
				it.Result = bytes.Repeat([]byte{byte(i)}, dataBlock/3) // its own block
			default:
				it.Result = bytes.Repeat([]byte{byte(i)}, 1+rng.Intn(40))
			}
			all = append(all, it)
		}
		for _, shuffled := range []bool{false, true} {
			p := New("survey", 1, 1, "sha256:in", nil)
			p.Items = append([]Item(nil), all...)
			if shuffled && n > 1 {
				rng.Shuffle(n, func(i, j int) { p.Items[i], p.Items[j] = p.Items[j], p.Items[i] })
			}
			b := encode(t, p, shuffled)
			want, err := Read(bytes.NewReader(b), "want")
			if err != nil {
				t.Fatal(err)
			}
			sorted := &Partial{Items: append([]Item(nil), want.Items...)}
			sorted.Sort()
			q, err := ReadForMerge(bytes.NewReader(b), "got")
			if err != nil {
				t.Fatal(err)
			}
			if shuffled == (q.packed != nil) && n > 1 {
				t.Errorf("%d items, shuffled %v: packed %v", n, shuffled, q.packed != nil)
			}
			m, err := Merge([]*Partial{q}, []string{"got"}, true)
			if err != nil {
				t.Fatal(err)
			}
			for i, x := range []*Partial{q, m} {
				if i == 1 {
					want = sorted // q keeps the file's order, m the run's
				}
				var got []Item
				x.Each(func(it *Item) error { got = append(got, *it); return nil })
				if x.Len() != n || len(got) != n {
					t.Fatalf("%d items: Len %d, Each gives %d", n, x.Len(), len(got))
				}
				if n > 0 && !reflect.DeepEqual(got, want.Items) {
					t.Fatalf("%d items, shuffled %v: the items differ from Read's", n, shuffled)
				}
			}
		}
	}
}
