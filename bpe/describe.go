package bpe

import (
	"crypto/sha256"
	"encoding/binary"
	"encoding/hex"
	"fmt"
	"strings"
	"unicode/utf8"
)

// Chain returns the vocabulary's normalizer and pre-tokenizer in words,
// in the order they run; "none" for a step that is absent. A pair (or the
// embedded default) has no normalizer and splits by its pattern.
func (v *Vocab) Chain() (normalizer, preTokenizer string) {
	if v.spm != nil {
		return v.spm.chain()
	}
	if v.pipe == nil {
		return "none", "split by the GPT-2 pattern (hand scanner), bytes as tokens"
	}
	normalizer, preTokenizer = "none", "none: the whole text is one merge problem"
	if v.pipe.norm != nil {
		normalizer = describeNorm(v.pipe.norm)
	}
	if len(v.pipe.pre) > 0 {
		var parts []string
		for _, st := range v.pipe.pre {
			parts = append(parts, describeStage(st))
		}
		preTokenizer = strings.Join(parts, ", then ")
	}
	if v.pipe.byteLevel {
		preTokenizer += "; bytes as tokens (byte-level)"
	}
	return normalizer, preTokenizer
}

func describeNorm(n normalizer) string {
	switch n := n.(type) {
	case *normSeq:
		var parts []string
		for _, x := range n.list {
			parts = append(parts, describeNorm(x))
		}
		return strings.Join(parts, ", then ")
	case *nfx:
		return [...]string{"NFC", "NFD", "NFKC", "NFKD"}[n.form] + " Unicode normalization"
	case *lowercase:
		return "lower case"
	case *strip:
		return fmt.Sprintf("strip white space (left %v, right %v)", n.left, n.right)
	case *prepend:
		return fmt.Sprintf("prepend %q", n.s)
	case *replaceString:
		return fmt.Sprintf("replace %q with %q", n.old, n.new)
	case *replaceRegex:
		return fmt.Sprintf("replace /%s/ with %q", n.re.src, n.new)
	case *precompiled:
		return fmt.Sprintf("precompiled character map (%d rules)", n.m.Len())
	}
	return fmt.Sprintf("%T", n)
}

var behaviorNames = [...]string{"isolated", "removed", "merged with the previous piece", "merged with the next piece", "contiguous runs"}

func describeStage(st stage) string {
	switch st := st.(type) {
	case *scanStage:
		switch st.name {
		case "whitespace":
			return "split into word and symbol runs, white space dropped"
		}
		return fmt.Sprintf("split by the %s pattern (hand scanner)", st.name)
	case *regexSplit:
		inv := ""
		if st.invert {
			inv = ", inverted"
		}
		return fmt.Sprintf("split by /%s/ (matches %s%s)", st.re.src, behaviorNames[st.b], inv)
	case *stringSplit:
		return fmt.Sprintf("split at %q (%s)", st.lit, behaviorNames[st.b])
	case *charSplit:
		return fmt.Sprintf("split at characters of one class (%s)", behaviorNames[st.b])
	case *prefixStage:
		return "a space before each piece"
	case *metaspaceStage:
		scheme := [...]string{"always", "first piece only", "never"}[st.scheme]
		return fmt.Sprintf("spaces spelled %q, prefix %s, split %v", st.repl, scheme, st.split)
	}
	return fmt.Sprintf("%T", st)
}

// Fingerprint returns "sha256:" and the hex sha256 of the vocabulary's
// canonical form: the family, every token's id and spelling, the merges in
// rank order, the added tokens with their flags, the normalizer and
// pre-tokenizer chain and the template. It is the same however the
// vocabulary was named or stored (file, folder, embedded) and differs
// when any of those differ. The name and the window are left out: they
// do not change a count.
func (v *Vocab) Fingerprint() string {
	if v.spm != nil {
		return v.spm.m.Fingerprint // the model file's own hash
	}
	// The canonical form is built in one buffer and hashed once: every
	// process of a sharded run computes it, and a write per token cost
	// more than the hash.
	b := make([]byte, 0, 16*len(v.tokens)+8*v.nMerges+1024)
	num := func(x uint64) { b = binary.AppendUvarint(b, x) }
	str := func(s string) { num(uint64(len(s))); b = append(b, s...) }
	str("morsel vocabulary 1")
	str(v.Family())
	norm, pre := v.Chain()
	str(norm)
	str(pre)
	num(uint64(len(v.tokens)))
	var added []bool // by id: the added tokens, spelled as they are
	if v.pipe != nil {
		added = make([]bool, len(v.tokens))
		for _, id := range v.pipe.addedIDs {
			if int(id) < len(added) {
				added[id] = true
			}
		}
	}
	for id, raw := range v.tokens {
		switch {
		case raw == nil:
			str("\x00hole")
		case v.spell != nil && v.spell[id] != nil:
			str(string(v.spell[id]))
		case added != nil && added[id]:
			str(string(raw))
		default:
			b = appendSpelled(b, raw)
		}
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
	sum := sha256.Sum256(b)
	return "sha256:" + hex.EncodeToString(sum[:])
}

// appendSpelled appends SpellBytes(raw) to b, its length first, as the
// fingerprint writes a string.
func appendSpelled(b, raw []byte) []byte {
	n := 0
	for _, c := range raw {
		n += 2 // the alphabet's runes are below U+0800
		if byteToRune[c] < utf8.RuneSelf {
			n--
		}
	}
	b = binary.AppendUvarint(b, uint64(n))
	for _, c := range raw {
		b = utf8.AppendRune(b, byteToRune[c])
	}
	return b
}
