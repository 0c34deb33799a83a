package main

import (
	"compress/gzip"
	"fmt"
	"io"
	"math/rand"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// shardRun runs cmd with args over n shards, each writing its partial
// report under dir, and returns the partials' paths.
func shardRun(t *testing.T, dir string, n int, cmd string, args ...string) []string {
	t.Helper()
	var parts []string
	for k := 1; k <= n; k++ {
		ext := ".gz" // compressed, and every other one plain
		if k%2 == 0 {
			ext = ".part"
		}
		p := filepath.Join(dir, fmt.Sprintf("%s-%d-of-%d%s", cmd, k, n, ext))
		line := append([]string{cmd}, args...)
		line = append(line, "--shard", fmt.Sprintf("%d/%d", k, n), "--format", "partial", "-o", p, "-q")
		if _, errs, code := run(t, "", line...); code != 0 && code != 1 {
			t.Fatalf("%s: exit %d: %s", strings.Join(line, " "), code, errs)
		}
		parts = append(parts, p)
	}
	return parts
}

// checkMerges merges the partials of cmd in random orders and compares
// each format with the single run's output, byte for byte, and exit status.
func checkMerges(t *testing.T, rng *rand.Rand, parts []string, formats []string, cmd string, args ...string) {
	t.Helper()
	for _, f := range formats {
		single := append(append([]string{cmd}, args...), "--format", f, "-q")
		want, _, wantCode := run(t, "", single...)
		order := make([]string, len(parts))
		for i, j := range rng.Perm(len(parts)) {
			order[i] = parts[j]
		}
		got, errs, code := run(t, "", append([]string{"merge", "--format", f, "-q"}, order...)...)
		if code != wantCode {
			t.Errorf("%s over %d shards, %s: merge exit %d, single run %d: %s", cmd, len(parts), f, code, wantCode, errs)
		}
		if got != want {
			t.Errorf("%s over %d shards, %s: the merged report differs from the single run's\n%s", cmd, len(parts), f, firstDiff(want, got))
		}
	}
}

// firstDiff shows the first line where a and b differ.
func firstDiff(a, b string) string {
	al, bl := strings.Split(a, "\n"), strings.Split(b, "\n")
	for i := 0; i < len(al) && i < len(bl); i++ {
		if al[i] != bl[i] {
			return fmt.Sprintf("line %d:\n single: %.200s\n merged: %.200s", i+1, al[i], bl[i])
		}
	}
	return fmt.Sprintf("single run %d lines, merge %d", len(al), len(bl))
}

// Every walking command, cut into 1, 2, 7 and 16 shards of the demo and
// merged in a random order, prints the single run's report in every
// format, byte for byte.
func TestMergeDemoEqualsSingleRun(t *testing.T) {
	const demo = "../../testdata/demo/"
	cases := []struct {
		cmd     string
		args    []string
		formats []string
	}{
		{"survey", []string{demo + "docs"}, []string{"table", "json", "csv", "md", "html"}},
		{"survey", []string{demo + "docs", "--once", "--sort", "tokens"}, []string{"json", "table"}},
		{"fit", []string{demo + "docs", "--frame", demo + "settings/frame.txt", "--reserve", "200"}, []string{"table", "json", "csv", "md", "html"}},
		{"quote", []string{demo + "docs", "--targets", demo + "settings/morsel.toml"}, []string{"table", "json", "csv", "md", "html"}},
		{"ration", []string{demo + "docs", "--frame", demo + "settings/frame.txt", "--reserve", "200"}, []string{"table", "json", "csv", "md"}},
		{"fragments", []string{demo + "docs", "--terms", demo + "settings/terms.txt"}, []string{"table", "json", "csv", "md", "html"}},
	}
	rng := rand.New(rand.NewSource(16))
	for _, c := range cases {
		t.Run(c.cmd, func(t *testing.T) {
			dir := t.TempDir()
			for _, n := range []int{1, 2, 7, 16} {
				parts := shardRun(t, dir, n, c.cmd, c.args...)
				formats := c.formats
				if n < 7 {
					formats = formats[:1] // every format on 7 and 16 shards
				}
				checkMerges(t, rng, parts, formats, c.cmd, c.args...)
			}
		})
	}
}

// A generated corpus of 100,000 JSON Lines records (3 MB), in 1, 2, 7 and
// 16 shards, merges into the single run's survey report, and in 2 into its
// fragments report.
func TestMerge100kRecords(t *testing.T) {
	if testing.Short() {
		t.Skip("100,000 records")
	}
	dir := t.TempDir()
	corpus := filepath.Join(dir, "records.jsonl")
	writeRecords(t, corpus, 100000)
	rng := rand.New(rand.NewSource(100000))
	for _, n := range []int{1, 2, 7, 16} {
		parts := shardRun(t, dir, n, "survey", corpus)
		checkMerges(t, rng, parts, []string{"json"}, "survey", corpus)
	}
	parts := shardRun(t, dir, 2, "fragments", corpus)
	checkMerges(t, rng, parts, []string{"json"}, "fragments", corpus)
}

// writeRecords writes n JSON Lines records of varied length and words,
// some empty and some repeated, deterministically.
func writeRecords(t *testing.T, path string, n int) {
	t.Helper()
	words := strings.Fields("mooring buoy tregallowmouth salinity chain th9 logger gateway fluvantrazine " +
		"drift anchor cruise vennskarth 3.5 knots pier station quillandri bathyphorus coating")
	rng := rand.New(rand.NewSource(int64(n)))
	var b strings.Builder
	for i := 0; i < n; i++ {
		switch {
		case i%997 == 0:
			b.WriteString(`{"text": ""}` + "\n")
			continue
		case i%1009 == 0:
			b.WriteString(`{"text": "the same text in many records"}` + "\n")
			continue
		case i%4999 == 0:
			b.WriteString("{not json\n")
			continue
		}
		b.WriteString(`{"id": `)
		fmt.Fprint(&b, i)
		b.WriteString(`, "text": "`)
		for j := rng.Intn(8); j >= 0; j-- {
			b.WriteString(words[rng.Intn(len(words))])
			b.WriteByte(' ')
		}
		b.WriteString("\"}\n")
	}
	if err := os.WriteFile(path, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
}

// A merge refuses partials that are not the shards of one run, saying why.
func TestMergeRefusals(t *testing.T) {
	const demo = "../../testdata/demo/"
	dir := t.TempDir()
	docs := demo + "docs"
	three := shardRun(t, dir, 3, "survey", docs)
	fit := shardRun(t, dir, 3, "fit", docs)
	other := filepath.Join(dir, "other")
	os.Mkdir(other, 0o755)
	onced := shardRun(t, other, 3, "survey", docs, "--once")
	ms := filepath.Join(dir, "ms")
	os.Mkdir(ms, 0o755)
	meta := filepath.Join(ms, "tokenizer.json")
	gunzipTo(t, "../../testdata/vocab/metaspace-32k/tokenizer.json.gz", meta)
	vocab := shardRun(t, ms, 3, "survey", docs, "--vocab", meta)
	cut := filepath.Join(dir, "cut.gz")
	b, _ := os.ReadFile(three[0])
	os.WriteFile(cut, b[:len(b)/2], 0o644)
	// A partial of version 1, gzip-compressed JSON Lines.
	v1 := filepath.Join(dir, "v1.gz")
	var gzb strings.Builder
	zw := gzip.NewWriter(&gzb)
	zw.Write([]byte(`{"h":{"format":"morsel-partial","version":1,"command":"survey","shards":[1],"of":1}}` + "\n"))
	zw.Close()
	os.WriteFile(v1, []byte(gzb.String()), 0o644)
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{three[0], three[1]}, "shard 3 of 3 missing"},
		{[]string{v1}, "v1.gz: partial report version 1; this build reads version 2 only: write the partials again with this build"},
		{[]string{three[0], three[1], three[1], three[2]}, "both hold shard 2/3"},
		{[]string{three[0], fit[1], three[2]}, "one is a survey report, the other a fit report"},
		{[]string{three[0], onced[1], three[2]}, "they differ in --once: (none) and true"},
		{[]string{three[0], vocab[1], three[2]}, "they differ in vocabulary: sha256:"},
		{[]string{"--vocab", meta, three[0], three[1], three[2]}, "the partial reports were made with vocabulary sha256:"},
		{[]string{cut}, "cut.gz"},
		{[]string{docs + "/minutes-2024-09-12-steering.md"}, "not a partial report"},
	} {
		_, errs, code := run(t, "", append([]string{"merge"}, c.args...)...)
		if code == 0 || !strings.Contains(errs, c.want) {
			t.Errorf("merge %v: exit %d, %q; want an error with %q", c.args, code, errs, c.want)
		}
	}
}

func gunzipTo(t *testing.T, gz, path string) {
	t.Helper()
	f, err := os.Open(gz)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	zr, err := gzip.NewReader(f)
	if err != nil {
		t.Fatal(err)
	}
	b, err := io.ReadAll(zr)
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(path, b, 0o644); err != nil {
		t.Fatal(err)
	}
}
