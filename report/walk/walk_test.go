package walk

import (
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"morsel/corpus"
)

// walked is one emitted item as a test sees it.
type walked struct {
	where string
	res   string
	skip  bool
}

// walkAll walks paths on workers workers and returns what emit saw.
func walkAll(t *testing.T, paths []string, opt corpus.Options, workers int) []walked {
	t.Helper()
	var got []walked
	work := func(d *corpus.Document) (string, error) {
		text, err := Text(d)
		return strings.ToUpper(string(text)), err
	}
	err := Walk(paths, opt, workers, nil, work, func(it corpus.Item, r string, err error) error {
		if it.Skip != nil {
			got = append(got, walked{where: fmt.Sprintf("%s:%d", it.Skip.Source, it.Skip.Record), skip: true})
			return nil
		}
		if err != nil {
			t.Fatalf("%s: %v", it.Doc.Source, err)
		}
		got = append(got, walked{where: fmt.Sprintf("%s:%d", it.Doc.Source, it.Doc.Record), res: r})
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	return got
}

// TestWalkKeepsInputOrderAcrossBatches walks more records than one batch
// holds, a malformed record among them, a document read as a stream and
// small files, and wants every item once, in input order, with its own
// result, whatever the number of workers.
func TestWalkKeepsInputOrderAcrossBatches(t *testing.T) {
	dir := t.TempDir()
	var lines strings.Builder
	var want []walked
	recs := filepath.Join(dir, "a.jsonl")
	for i := 1; i <= 3*batchItems+5; i++ {
		if i == batchItems+1 {
			lines.WriteString("{not json\n")
			want = append(want, walked{where: fmt.Sprintf("%s:%d", recs, i), skip: true})
			continue
		}
		fmt.Fprintf(&lines, "{\"text\":\"record %d\"}\n", i)
		want = append(want, walked{where: fmt.Sprintf("%s:%d", recs, i), res: fmt.Sprintf("RECORD %d", i)})
	}
	write := func(name, text string) string {
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	write("a.jsonl", lines.String())
	big := strings.Repeat("streamed text ", 100)
	want = append(want, walked{where: write("b.txt", big) + ":0", res: strings.ToUpper(big)})
	for i := 0; i < 3; i++ {
		p := write(fmt.Sprintf("c%d.txt", i), fmt.Sprintf("file %d", i))
		want = append(want, walked{where: p + ":0", res: fmt.Sprintf("FILE %d", i)})
	}
	opt := corpus.Options{StreamAbove: 1000}
	for _, workers := range []int{1, 2, 5} {
		got := walkAll(t, []string{dir}, opt, workers)
		if len(got) != len(want) {
			t.Fatalf("%d workers: %d items, want %d", workers, len(got), len(want))
		}
		for i := range want {
			if got[i].where != want[i].where || got[i].skip != want[i].skip || got[i].res != want[i].res {
				t.Fatalf("%d workers: item %d is %+v, want %+v", workers, i, got[i], want[i])
			}
		}
	}
}

// TestWalkStopsOnEmitError wants an emit error back, and the walk to stop
// with every stream closed.
func TestWalkStopsOnEmitError(t *testing.T) {
	dir := t.TempDir()
	var lines strings.Builder
	for i := 0; i < 10*batchItems; i++ {
		fmt.Fprintf(&lines, "{\"text\":\"r%d\"}\n", i)
	}
	if err := os.WriteFile(filepath.Join(dir, "a.jsonl"), []byte(lines.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	stopAt := batchItems + 3
	n := 0
	err := Walk([]string{dir}, corpus.Options{}, 2, nil, func(d *corpus.Document) (int, error) {
		_, err := io.Copy(io.Discard, strings.NewReader(string(d.Text)))
		return len(d.Text), err
	}, func(corpus.Item, int, error) error {
		n++
		if n == stopAt {
			return fmt.Errorf("enough")
		}
		return nil
	})
	if err == nil || err.Error() != "enough" {
		t.Fatalf("err = %v, want the emit error", err)
	}
	if n != stopAt {
		t.Fatalf("emit called %d times after its error, want it to stop at %d", n, stopAt)
	}
}
