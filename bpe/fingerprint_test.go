package bpe

import (
	"crypto/sha256"
	"encoding/binary"
	"encoding/hex"
	"fmt"
	"testing"
)

// The fingerprint built in one buffer is the one a hash fed token by token
// gives (fingerprintByWrites, the first way it was computed): partials
// written by earlier builds still merge, and vocabularies keep their names.
func TestFingerprintUnchanged(t *testing.T) {
	vocabs := map[string]*Vocab{"gpt2 (embedded)": Default()}
	for _, name := range []string{"qwen3", "metaspace-32k", "cjk-sequence", "words", "precompiled"} {
		vocabs[name], _ = loadTestBundle(t, name)
	}
	for name, v := range vocabs {
		if got, want := v.Fingerprint(), v.fingerprintByWrites(); got != want {
			t.Errorf("%s: fingerprint %s, token by token %s", name, got, want)
		}
	}
}

func BenchmarkFingerprint(b *testing.B) {
	v, _ := loadTestBundle(b, "qwen3")
	for _, c := range []struct {
		name string
		v    *Vocab
	}{{"gpt2", Default()}, {"qwen3", v}} {
		b.Run(c.name, func(b *testing.B) {
			for b.Loop() {
				c.v.Fingerprint()
			}
		})
		b.Run(c.name+"-by-writes", func(b *testing.B) {
			for b.Loop() {
				c.v.fingerprintByWrites()
			}
		})
	}
}

func (v *Vocab) fingerprintByWrites() string {
	if v.spm != nil {
		return v.spm.m.Fingerprint // the model file's own hash
	}
	h := sha256.New()
	var n [binary.MaxVarintLen64]byte
	num := func(x uint64) { h.Write(n[:binary.PutUvarint(n[:], x)]) }
	str := func(s string) { num(uint64(len(s))); h.Write([]byte(s)) }
	str("morsel vocabulary 1")
	str(v.Family())
	norm, pre := v.Chain()
	str(norm)
	str(pre)
	num(uint64(len(v.tokens)))
	for id := range v.tokens {
		sp, ok := v.Spelling(id)
		if !ok {
			str("\x00hole")
			continue
		}
		str(sp)
	}
	ranked := make([][2]uint32, v.nMerges)
	v.merges.each(func(k, rm uint64) {
		if r := rm >> 32; r < uint64(len(ranked)) {
			ranked[r] = [2]uint32{uint32(k >> 32), uint32(k)}
		}
	})
	num(uint64(len(ranked)))
	for _, m := range ranked {
		num(uint64(m[0]))
		num(uint64(m[1]))
	}
	m := &v.model
	str(fmt.Sprintf("unk=%d fuse=%v fallback=%v ignore=%v prefix=%q suffix=%q", m.unk, m.fuseUnk, m.fallback, m.ignoreMerges, m.prefix, m.suffix))
	if v.pipe != nil {
		for _, set := range []*addedSet{&v.pipe.added, &v.pipe.addedNorm} {
			for _, a := range set.toks {
				str(fmt.Sprintf("%d %q %v %v %v %v %v", a.id, a.content, a.special, a.lstrip, a.rstrip, a.single, a.nrm))
			}
		}
		for _, id := range v.pipe.template {
			num(uint64(id))
		}
	}
	return "sha256:" + hex.EncodeToString(h.Sum(nil))
}
