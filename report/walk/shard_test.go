package walk

import (
	"fmt"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"testing"

	"morsel/corpus"
)

// TestShardCoversTheWalkOnce cuts a walk of files, a JSON Lines file with
// a malformed record, a missing path and a duplicate into 1, 2, 7 and 16
// shares, and wants every item of the whole walk in exactly one share,
// with the Place it has in the whole walk, and each share in walk order.
func TestShardCoversTheWalkOnce(t *testing.T) {
	dir := t.TempDir()
	var lines []string
	for i := 0; i < 300; i++ {
		lines = append(lines, fmt.Sprintf(`{"text": "record %d"}`, i))
	}
	lines[17] = "{not json"
	write := func(name, text string) string {
		p := filepath.Join(dir, name)
		os.MkdirAll(filepath.Dir(p), 0o755)
		if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	jl := write("big.jsonl", strings.Join(lines, "\n")+"\n")
	for i := 0; i < 40; i++ {
		write(fmt.Sprintf("docs/n%02d.txt", i), fmt.Sprintf("note %d", i))
	}
	write("docs/a-b.txt", "a-b")
	write("docs/a/inner.txt", "inner")
	paths := []string{filepath.Join(dir, "docs"), jl, filepath.Join(dir, "missing.txt"), jl}

	type seen struct {
		at    Place
		where string
	}
	walkShare := func(share corpus.Shard) []seen {
		var got []seen
		err := Shard(paths, corpus.Options{}, share, 3, nil, func(d *corpus.Document) (int, error) {
			text, err := Text(d)
			return len(text), err
		}, func(at Place, it corpus.Item, _ int, _ error) error {
			src, rec := itemAt(it)
			if !share.Owns(src, rec) {
				t.Errorf("share %v got %s:%d, of share %d", share, src, rec, corpus.ShardOf(src, rec, share.N))
			}
			got = append(got, seen{at, fmt.Sprintf("%s:%d", src, rec)})
			return nil
		})
		if err != nil {
			t.Fatal(err)
		}
		return got
	}
	whole := walkShare(corpus.Shard{})
	if len(whole) < 300+42+2 {
		t.Fatalf("the whole walk has %d items", len(whole))
	}
	for i := 1; i < len(whole); i++ {
		a, b := whole[i-1].at, whole[i].at
		if a.In > b.In || a.In == b.In && a.Seq >= b.Seq {
			t.Fatalf("whole walk: place %v after %v", b, a)
		}
	}
	for _, n := range []int{1, 2, 7, 16} {
		var all []seen
		for k := 1; k <= n; k++ {
			got := walkShare(corpus.Shard{K: k, N: n})
			if !sort.SliceIsSorted(got, func(i, j int) bool {
				return got[i].at.In < got[j].at.In || got[i].at.In == got[j].at.In && got[i].at.Seq < got[j].at.Seq
			}) {
				t.Errorf("share %d/%d is not in walk order", k, n)
			}
			all = append(all, got...)
		}
		sort.Slice(all, func(i, j int) bool {
			return all[i].at.In < all[j].at.In || all[i].at.In == all[j].at.In && all[i].at.Seq < all[j].at.Seq
		})
		if len(all) != len(whole) {
			t.Fatalf("%d shares hold %d items, the whole walk %d", n, len(all), len(whole))
		}
		for i := range all {
			if all[i] != whole[i] {
				t.Fatalf("%d shares: item %d is %v, the whole walk's %v", n, i, all[i], whole[i])
			}
		}
	}
}
