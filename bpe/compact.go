package bpe

import (
	_ "embed"
	"encoding/binary"
	"errors"
	"fmt"
	"sync"
)

// The compact form of a vocabulary: the token bytes and the ranked merges as
// varints, so that the embedded default loads without parsing JSON. The
// readable files in gpt2/ stay the source of truth; go generate rebuilds
// gpt2.bin from them and a test checks that the two agree.
//
//go:generate go run ./internal/mkcompact -vocab gpt2/vocab.json -merges gpt2/merges.txt -window 1024 -name gpt2 -o gpt2.bin

const compactMagic = "morsel-bpe 1\n"

//go:embed gpt2.bin
var gpt2Compact []byte

var (
	defaultOnce  sync.Once
	defaultVocab *Vocab
	defaultErr   error
)

// Default returns the embedded GPT-2 vocabulary (50,257 tokens, 50,000
// merges, a 1,024-token window). It is loaded once and shared; it panics
// only if the binary was built with a corrupt embedded file.
func Default() *Vocab {
	defaultOnce.Do(func() { defaultVocab, defaultErr = DecodeCompact(gpt2Compact) })
	if defaultErr != nil {
		panic("bpe: embedded vocabulary: " + defaultErr.Error())
	}
	return defaultVocab
}

// AppendCompact appends the compact form of v to dst.
func (v *Vocab) AppendCompact(dst []byte) []byte {
	dst = append(dst, compactMagic...)
	dst = appendString(dst, v.name)
	dst = binary.AppendUvarint(dst, uint64(v.window))
	dst = binary.AppendUvarint(dst, uint64(len(v.tokens)))
	for _, t := range v.tokens {
		dst = binary.AppendUvarint(dst, uint64(len(t)))
		dst = append(dst, t...)
	}
	ranked := make([][3]uint32, v.nMerges)
	v.merges.each(func(k, rm uint64) { ranked[rm>>32] = [3]uint32{uint32(k >> 32), uint32(k), uint32(rm)} })
	dst = binary.AppendUvarint(dst, uint64(len(ranked)))
	for _, m := range ranked {
		for _, x := range m {
			dst = binary.AppendUvarint(dst, uint64(x))
		}
	}
	return dst
}

func appendString(dst []byte, s string) []byte {
	dst = binary.AppendUvarint(dst, uint64(len(s)))
	return append(dst, s...)
}

var errCompact = errors.New("compact vocabulary is corrupt")

// DecodeCompact reads a vocabulary written by AppendCompact. The token
// slices point into data, which must not be modified afterwards.
func DecodeCompact(data []byte) (*Vocab, error) {
	if len(data) < len(compactMagic) || string(data[:len(compactMagic)]) != compactMagic {
		return nil, fmt.Errorf("%w: bad header", errCompact)
	}
	p := data[len(compactMagic):]
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
	take := func(n uint64) []byte {
		if bad || n > uint64(len(p)) {
			bad = true
			return nil
		}
		b := p[:n:n]
		p = p[n:]
		return b
	}
	v := &Vocab{}
	v.name = string(take(uv()))
	v.window = int(uv())
	nt := uv()
	if bad || nt > uint64(len(p)) {
		return nil, fmt.Errorf("%w: token count", errCompact)
	}
	v.tokens = make([][]byte, nt)
	for i := range v.tokens {
		v.tokens[i] = take(uv())
	}
	nm := uv()
	if bad || nm > uint64(len(p)) {
		return nil, fmt.Errorf("%w: merge count", errCompact)
	}
	v.merges = newU64Table(int(nm))
	for r := uint64(0); r < nm; r++ {
		a, b, m := uv(), uv(), uv()
		if a >= nt || b >= nt || m >= nt {
			bad = true
			break
		}
		v.merges.put(pairKey(uint32(a), uint32(b)), r<<32|m)
	}
	if bad {
		return nil, fmt.Errorf("%w: truncated", errCompact)
	}
	v.nMerges = int(nm)
	var seen [256]bool
	for id, t := range v.tokens {
		if len(t) == 1 && !seen[t[0]] {
			seen[t[0]] = true
			v.byteID[t[0]] = uint32(id)
		}
	}
	for b, ok := range seen {
		if !ok {
			return nil, fmt.Errorf("%w: no token for byte 0x%02X", errCompact, b)
		}
	}
	v.findSpecials()
	return v, nil
}
