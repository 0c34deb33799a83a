package bpe

import (
	"os"
	"path/filepath"
	"testing"
)

// A bundle loaded twice comes the second time from the cache, and encodes
// as the parsed one does; a torn, corrupt or foreign entry is ignored and
// rewritten.
func TestBundleCache(t *testing.T) {
	cache := t.TempDir()
	t.Setenv("MORSEL_CACHE_DIR", cache)
	data, cfg := readTestBundle(t, testBundles["qwen3"])
	dir := t.TempDir()
	if err := os.WriteFile(filepath.Join(dir, "tokenizer.json"), data, 0o644); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(dir, "tokenizer_config.json"), cfg, 0o644); err != nil {
		t.Fatal(err)
	}
	text := corpusTexts(t)["zh_CN-apt.po.txt"]
	want := encodeWith(t, mustLoad(t, dir), text)
	entries, _ := filepath.Glob(filepath.Join(cache, "*.bin"))
	if len(entries) != 1 {
		t.Fatalf("%d cache entries after one load, want 1", len(entries))
	}
	entry := entries[0]
	full, _ := os.ReadFile(entry)
	check := func(what string) {
		t.Helper()
		v := mustLoad(t, dir)
		if got := encodeWith(t, v, text); !eqInts(got, want) {
			t.Fatalf("%s: %d ids, the parsed bundle gives %d", what, len(got), len(want))
		}
		if v.Window() != 131072 || len(v.Specials()) != 14 || len(v.Added()) != 26 {
			t.Fatalf("%s: window %d, %d specials, %d added", what, v.Window(), len(v.Specials()), len(v.Added()))
		}
	}
	check("from the cache")
	for _, c := range []struct {
		name string
		bad  []byte
	}{
		{"torn", full[:len(full)/2]},
		{"flipped byte", flip(full, len(full)/3)},
		{"empty", nil},
		{"another key", flip(full, len(cacheMagic)+1)},
	} {
		if err := os.WriteFile(entry, c.bad, 0o644); err != nil {
			t.Fatal(err)
		}
		check(c.name)
		if again, _ := os.ReadFile(entry); string(again) != string(full) {
			t.Fatalf("%s: the entry was not rewritten", c.name)
		}
	}
	if b, ok := decodeCache(full, bundleKey(data, nil)); ok || b != nil {
		t.Fatal("an entry is taken for a bundle with another config")
	}
}

func flip(b []byte, i int) []byte {
	c := append([]byte(nil), b...)
	c[i] ^= 0x40
	return c
}

func mustLoad(t *testing.T, path string) *Vocab {
	t.Helper()
	v, err := LoadBundle(path)
	if err != nil {
		t.Fatal(err)
	}
	return v
}

func encodeWith(t *testing.T, v *Vocab, text []byte) []int {
	enc, err := NewEncoder(v, Options{})
	if err != nil {
		t.Fatal(err)
	}
	return enc.Encode(text)
}
