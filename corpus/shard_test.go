package corpus

import (
	"encoding/binary"
	"fmt"
	"hash/fnv"
	"os"
	"path/filepath"
	"testing"
)

func TestParseShard(t *testing.T) {
	for _, c := range []struct {
		in   string
		want Shard
		ok   bool
	}{
		{"1/1", Shard{1, 1}, true},
		{"3/8", Shard{3, 8}, true},
		{"8/8", Shard{8, 8}, true},
		{"0/8", Shard{}, false},
		{"9/8", Shard{}, false},
		{"1/0", Shard{}, false},
		{"-1/4", Shard{}, false},
		{"3", Shard{}, false},
		{"a/b", Shard{}, false},
		{"", Shard{}, false},
	} {
		got, err := ParseShard(c.in)
		if (err == nil) != c.ok || got != c.want {
			t.Errorf("ParseShard(%q) = %v, %v; want %v, ok %v", c.in, got, err, c.want, c.ok)
		}
		if c.ok && got.String() != c.in {
			t.Errorf("%v.String() = %q, want %q", got, got.String(), c.in)
		}
	}
}

// The hash is FNV-1a as the Go standard library's hash/fnv computes it.
func TestShardHashIsFNV1a(t *testing.T) {
	for _, c := range []struct {
		src string
		rec int
	}{{"", 0}, {"a", 0}, {"notes/a.txt", 0}, {"big.jsonl", 1}, {"big.jsonl", 123456789}, {"\xff\x00bin", 7}} {
		h := fnv.New64a()
		h.Write([]byte(c.src))
		var tail [9]byte
		binary.LittleEndian.PutUint64(tail[1:], uint64(c.rec))
		h.Write(tail[:])
		if got, want := shardHash(c.src, c.rec), h.Sum64(); got != want {
			t.Errorf("shardHash(%q, %d) = %#x, hash/fnv gives %#x", c.src, c.rec, got, want)
		}
	}
}

// Pinned shares: the shard of an item must never change between builds,
// or partials written by two builds would overlap.
func TestShardOfPinned(t *testing.T) {
	for _, c := range []struct {
		src    string
		rec, n int
		want   int
	}{
		{"testdata/demo/frame.txt", 0, 16, 3},
		{"testdata/demo/support-tickets-2024-q4.jsonl", 3, 7, 7},
		{"gs://bucket/archive/part-00017.jsonl.gz", 99999, 1000, 458},
		{"a", 0, 2, 1},
	} {
		if got := ShardOf(c.src, c.rec, c.n); got != c.want {
			t.Errorf("ShardOf(%q, %d, %d) = %d, pinned %d", c.src, c.rec, c.n, got, c.want)
		}
	}
}

// Every item belongs to exactly one of the N shards, for many N.
func TestShardsCoverOnce(t *testing.T) {
	items := 0
	for n := 1; n <= 64; n++ {
		for f := 0; f < 40; f++ {
			src := fmt.Sprintf("corpus/part-%03d.jsonl", f)
			for rec := 0; rec < 50; rec++ {
				owners := 0
				for k := 1; k <= n; k++ {
					if (Shard{K: k, N: n}).Owns(src, rec) {
						owners++
					}
				}
				if owners != 1 {
					t.Fatalf("%s:%d has %d owners among %d shards", src, rec, owners, n)
				}
				items++
			}
		}
	}
	if !(Shard{}).Owns("x", 3) || !(Shard{K: 1, N: 1}).Owns("x", 3) {
		t.Error("the whole walk must own everything")
	}
}

// The records of one big file, and many small files, spread evenly: each
// share within 5% of its expected size (over 4 standard deviations for
// 100,000 items in 16 shares, so a failure means a bias, not bad luck).
func TestShardSpread(t *testing.T) {
	for _, n := range []int{2, 7, 16} {
		recs := make([]int, n+1)
		files := make([]int, n+1)
		const items = 100000
		for i := 1; i <= items; i++ {
			recs[ShardOf("exports/tickets.jsonl", i, n)]++
			files[ShardOf(fmt.Sprintf("archive/%02d/doc-%06d.txt", i%37, i), 0, n)]++
		}
		want := float64(items) / float64(n)
		for k := 1; k <= n; k++ {
			for name, got := range map[string]int{"records": recs[k], "files": files[k]} {
				if d := float64(got) - want; d > 0.05*want || d < -0.05*want {
					t.Errorf("n=%d: shard %d holds %d %s, want about %.0f", n, k, got, name, want)
				}
			}
		}
	}
}

// A file that Wants refuses would have given its shard nothing: reading
// every input of a folder and keeping the owned items gives the same items
// whether or not refused inputs are opened.
func TestShardWantsSkipsOnlyForeignFiles(t *testing.T) {
	dir := t.TempDir()
	files := map[string]string{
		"a.txt": "alpha", "b.md": "# beta", "c.html": "<p>gamma</p>", "d.go": "package d",
		"e.jsonl": "{\"text\":\"one\"}\n{\"text\":\"two\"}\n{\"text\":\"three\"}\n",
		"f.csv":   "id,text\n1,uno\n2,dos\n", "g": "{\"text\":\"sniffed\"}\n{\"text\":\"records\"}\n",
		"h.png": "\x89PNG", "i.txt.gz": "not really gzip", "j.bin.txt": "",
	}
	for name, body := range files {
		if err := os.WriteFile(filepath.Join(dir, name), []byte(body), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	ins, _ := List([]string{dir}, Options{})
	if len(ins) != len(files) {
		t.Fatalf("listed %d inputs, want %d", len(ins), len(files))
	}
	refused := 0
	for _, n := range []int{2, 3, 5} {
		for k := 1; k <= n; k++ {
			s := Shard{K: k, N: n}
			for _, in := range ins {
				owned := 0
				err := Read(in, Options{}, func(it Item) error {
					src, rec := itemKey(it)
					if s.Owns(src, rec) {
						owned++
					}
					if it.Doc != nil && it.Doc.Stream != nil {
						it.Doc.Stream.Close()
					}
					return nil
				})
				if err != nil {
					t.Fatal(err)
				}
				if !s.Wants(in, Options{}) {
					refused++
					if owned > 0 {
						t.Errorf("shard %v: %s refused but holds %d of its items", s, in.Path, owned)
					}
				}
			}
		}
	}
	if refused == 0 {
		t.Error("no input was refused; the test checks nothing")
	}
	// Records files and sniffed files are always read.
	for _, name := range []string{"e.jsonl", "f.csv", "g"} {
		for k := 1; k <= 5; k++ {
			if !(Shard{K: k, N: 5}).Wants(Input{Path: filepath.Join(dir, name)}, Options{}) {
				t.Errorf("shard %d/5 refuses %s", k, name)
			}
		}
	}
}

func itemKey(it Item) (string, int) {
	if it.Doc != nil {
		return it.Doc.Source, it.Doc.Record
	}
	return it.Skip.Source, it.Skip.Record
}

// An Owner gives Shard.Owns's answer whatever order the sources come in.
func TestOwnerIsOwns(t *testing.T) {
	for _, n := range []int{1, 2, 7} {
		for k := 1; k <= n; k++ {
			share := Shard{K: k, N: n}
			o := NewOwner(share)
			for i := 0; i < 300; i++ {
				src := []string{"a.jsonl", "", "notes/b.csv", "a.jsonl"}[i%7%4]
				if got, want := o.Owns(src, i), share.Owns(src, i); got != want {
					t.Fatalf("%v: Owner.Owns(%q, %d) = %v, Shard.Owns %v", share, src, i, got, want)
				}
			}
		}
	}
}
