package bpe

import (
	"bufio"
	"bytes"
	"crypto/sha256"
	"encoding/binary"
	"encoding/json"
	"hash/crc32"
	"io"
	"os"
	"path/filepath"
)

// A large bundle takes far longer to parse than the rest of a short run, so
// the parsed form is kept in the user's cache folder, in a file named by
// the sha256 of the bundle's bytes and of its tokenizer_config.json. An
// entry is written to a temporary file and renamed into place, and carries
// its key and a CRC-32C of its contents: a torn, stale or foreign entry is
// never used (the bundle is parsed again and the entry rewritten).
// MORSEL_CACHE_DIR names another folder; "off" turns the cache off.

const cacheMagic = "morsel-bundle-cache 1\n"

var castagnoli = crc32.MakeTable(crc32.Castagnoli)

// cacheDir returns the folder for parsed bundles, or "" when there is none.
func cacheDir() string {
	if d := os.Getenv("MORSEL_CACHE_DIR"); d != "" {
		if d == "off" {
			return ""
		}
		return d
	}
	d, err := os.UserCacheDir()
	if err != nil {
		return ""
	}
	return filepath.Join(d, "morsel", "bundles")
}

func bundleKey(data, cfg []byte) [32]byte {
	h := sha256.New()
	h.Write(data)
	var n [8]byte
	binary.LittleEndian.PutUint64(n[:], uint64(len(data)))
	h.Write(n[:])
	h.Write(cfg)
	var k [32]byte
	h.Sum(k[:0])
	return k
}

// loadBundleCached parses a bundle read from path, or takes its parsed
// form from the cache.
func loadBundleCached(path string, data []byte, cfgPath string, cfg []byte) (*Vocab, error) {
	dir := cacheDir()
	if dir == "" {
		return ParseBundle(path, data, cfgPath, cfg)
	}
	key := bundleKey(data, cfg)
	file := filepath.Join(dir, hexKey(key)+".bin")
	if b := readCache(file, key); b != nil {
		b.name = path
		if v, err := b.build(cfgPath, cfg); err == nil {
			return v, nil
		}
	}
	b, err := parseBundleJSON(path, data)
	if err != nil {
		return nil, err
	}
	v, err := b.build(cfgPath, cfg)
	if err != nil {
		return nil, err
	}
	writeCache(dir, file, key, b, v)
	return v, nil
}

func hexKey(k [32]byte) string {
	const digits = "0123456789abcdef"
	out := make([]byte, 64)
	for i, c := range k {
		out[2*i], out[2*i+1] = digits[c>>4], digits[c&15]
	}
	return string(out)
}

// encodeCache writes the cache entry of a built bundle to w, a piece at a
// time: the entry of a large bundle is megabytes that a load need not hold.
func encodeCache(w io.Writer, key [32]byte, b *bundleSpec, v *Vocab) error {
	small := map[string]json.RawMessage{}
	for k, r := range b.comps {
		small[k] = r
	}
	ms, _ := json.Marshal(b.model)
	small["\x00model"] = ms
	head, _ := json.Marshal(small)
	crc := crc32.New(castagnoli)
	bw := bufio.NewWriterSize(io.MultiWriter(w, crc), 64<<10)
	var out []byte
	flush := func() {
		if len(out) >= 32<<10 {
			bw.Write(out)
			out = out[:0]
		}
	}
	out = append([]byte(cacheMagic), key[:]...)
	out = appendString(out, string(head))
	out = binary.AppendUvarint(out, uint64(len(b.vocab)))
	for i, e := range b.vocab {
		out = binary.AppendUvarint(out, uint64(e.id))
		out = appendString(out, string(b.raws[i]))
		flush()
	}
	out = binary.AppendUvarint(out, uint64(v.nMerges))
	n := 0
	v.merges.each(func(uint64, uint64) { n++ })
	out = binary.AppendUvarint(out, uint64(n))
	v.merges.each(func(k, rm uint64) {
		out = binary.AppendUvarint(out, rm>>32)
		out = binary.AppendUvarint(out, k>>32)
		out = binary.AppendUvarint(out, k&0xffffffff)
		out = binary.AppendUvarint(out, rm&0xffffffff)
		flush()
	})
	bw.Write(out)
	if err := bw.Flush(); err != nil {
		return err
	}
	_, err := w.Write(binary.LittleEndian.AppendUint32(nil, crc.Sum32()))
	return err
}

func writeCache(dir, file string, key [32]byte, b *bundleSpec, v *Vocab) {
	if b.raws == nil {
		return
	}
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return
	}
	f, err := os.CreateTemp(dir, ".entry-*")
	if err != nil {
		return
	}
	werr := encodeCache(f, key, b, v)
	cerr := f.Close()
	if werr != nil || cerr != nil || os.Rename(f.Name(), file) != nil {
		os.Remove(f.Name())
	}
}

// readCache returns the bundle an entry holds, or nil when the entry is
// missing, torn, corrupt or for another key.
func readCache(file string, key [32]byte) *bundleSpec {
	data, err := os.ReadFile(file)
	if err != nil {
		return nil
	}
	b, ok := decodeCache(data, key)
	if !ok {
		return nil
	}
	return b
}

func decodeCache(data []byte, key [32]byte) (*bundleSpec, bool) {
	if len(data) < len(cacheMagic)+32+4 || string(data[:len(cacheMagic)]) != cacheMagic {
		return nil, false
	}
	body, sum := data[:len(data)-4], binary.LittleEndian.Uint32(data[len(data)-4:])
	if crc32.Checksum(body, castagnoli) != sum || !bytes.Equal(body[len(cacheMagic):len(cacheMagic)+32], key[:]) {
		return nil, false
	}
	p := body[len(cacheMagic)+32:]
	bad := false
	uv := func() uint64 {
		x, n := binary.Uvarint(p)
		if n <= 0 {
			bad = true
			return 0
		}
		p = p[n:]
		return x
	}
	take := func() []byte {
		n := uv()
		if bad || n > uint64(len(p)) {
			bad = true
			return nil
		}
		s := p[:n:n]
		p = p[n:]
		return s
	}
	b := &bundleSpec{digested: true, comps: map[string]json.RawMessage{}}
	if err := json.Unmarshal(take(), &b.comps); err != nil || bad {
		return nil, false
	}
	if err := json.Unmarshal(b.comps["\x00model"], &b.model); err != nil {
		return nil, false
	}
	delete(b.comps, "\x00model")
	nv := uv()
	if bad || nv > uint64(len(p)) {
		return nil, false
	}
	b.vocab = make([]vocabEntry, nv)
	for i := range b.vocab {
		id := uv()
		b.vocab[i] = vocabEntry{key: take(), id: int32(id)}
		if id >= maxTokenID {
			bad = true
		}
	}
	b.nMerges = int(uv())
	nt := uv()
	if bad || nt > uint64(len(p)) {
		return nil, false
	}
	b.triples = make([]mergeTriple, nt)
	for i := range b.triples {
		b.triples[i] = mergeTriple{uint32(uv()), uint32(uv()), uint32(uv()), uint32(uv())}
	}
	if bad || len(p) != 0 {
		return nil, false
	}
	for _, t := range b.triples {
		if t.a >= maxTokenID || t.b >= maxTokenID || t.merged >= maxTokenID {
			return nil, false
		}
	}
	return b, true
}
