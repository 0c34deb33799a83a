// Package charsmap reads SentencePiece's precompiled character map, the
// compiled normalization rules a model file carries, and applies it as
// SentencePiece's normalizer does.
//
// The map is a 32-bit little-endian length, a double-array trie of that
// many bytes whose keys are UTF-8 sequences, and a pool of NUL-terminated
// replacement strings that the trie's values point into. The trie is a
// directed acyclic graph: keys with equal tails share their nodes.
package charsmap

import (
	"encoding/binary"
	"errors"
	"fmt"
	"unicode/utf8"
)

// ErrCorrupt is wrapped by every error Parse returns.
var ErrCorrupt = errors.New("corrupt precompiled character map")

// A Map holds the rules of one precompiled character map. The zero Map has
// no rules. A Map is read-only and safe for concurrent use.
type Map struct {
	units  []uint32 // the double array
	pool   []byte   // replacement strings, each ended by a NUL
	starts [256]bool
	inKeys [256]bool // the bytes some key holds
	ascii  [128]asciiRule
	rules  int
}

// asciiRule is what the map does with an ASCII byte followed by another
// ASCII byte or by nothing, which most text is: copy it, or replace it by
// the rule for the byte alone (has), unless some longer key begins with
// the byte and an ASCII byte (longer), when only a trie walk can tell.
type asciiRule struct {
	has, longer bool
	repl        []byte
}

// A trie unit packs a node's label, whether a key ends at the node, and
// the offset to its children; a value unit holds an offset into the pool.
const (
	leafBit  = 1 << 8
	valueBit = 1 << 31 // set in value units, so no key byte matches them
)

func label(u uint32) uint32  { return u & (valueBit | 0xff) }
func hasLeaf(u uint32) bool  { return u&leafBit != 0 }
func value(u uint32) uint32  { return u &^ valueBit }
func offset(u uint32) uint32 { return (u >> 10) << ((u & (1 << 9)) >> 6) }

// Parse decodes a precompiled character map. An empty blob is a map with
// no rules (a model normalized by "identity" carries none). Parse fails,
// with an error wrapping ErrCorrupt, when the length is missing or larger
// than the blob, the trie is not whole 32-bit units, a path through the
// trie leaves the array or loops, or a rule's replacement is not a
// NUL-terminated string of the pool.
func Parse(blob []byte) (*Map, error) {
	if len(blob) == 0 {
		return &Map{}, nil
	}
	if len(blob) <= 4 {
		return nil, fmt.Errorf("%w: %d bytes cannot hold the trie size and a trie", ErrCorrupt, len(blob))
	}
	size := binary.LittleEndian.Uint32(blob)
	rest := blob[4:]
	switch {
	case uint64(size) > uint64(len(rest)):
		return nil, fmt.Errorf("%w: the trie size %d exceeds the %d bytes that follow it", ErrCorrupt, size, len(rest))
	case size == 0:
		return nil, fmt.Errorf("%w: the trie is empty", ErrCorrupt)
	case size%4 != 0:
		return nil, fmt.Errorf("%w: the trie size %d is not a whole number of 4-byte units", ErrCorrupt, size)
	}
	m := &Map{units: make([]uint32, size/4), pool: rest[size:]}
	for i := range m.units {
		m.units[i] = binary.LittleEndian.Uint32(rest[4*i:])
	}
	if err := m.check(); err != nil {
		return nil, err
	}
	return m, nil
}

// check walks every node the trie reaches, once each, and counts the rules.
func (m *Map) check() error {
	n := uint32(len(m.units))
	root := offset(m.units[0])
	if root >= n {
		return fmt.Errorf("%w: the root's children at unit %d lie outside the %d-unit trie", ErrCorrupt, root, n)
	}
	const (
		unseen = iota
		open
		done
	)
	state := make([]uint8, n)
	keys := make([]int, n) // keys below a node, once it is done
	var walk func(p uint32, depth int) (int, error)
	walk = func(p uint32, depth int) (int, error) {
		switch state[p] {
		case open:
			return 0, fmt.Errorf("%w: the trie loops back to unit %d", ErrCorrupt, p)
		case done:
			return keys[p], nil
		}
		state[p] = open
		total := 0
		for c := uint32(1); c < 256; c++ {
			q := p ^ c
			if q >= n || label(m.units[q]) != c {
				continue
			}
			child := q ^ offset(m.units[q])
			if child >= n {
				return 0, fmt.Errorf("%w: unit %d, at depth %d, points to unit %d outside the %d-unit trie", ErrCorrupt, q, depth+1, child, n)
			}
			if depth == 0 {
				m.starts[c] = true
			}

			leaf := hasLeaf(m.units[q])
			if leaf {
				if err := m.checkValue(m.units[child], child); err != nil {
					return 0, err
				}
				total++
			}
			k, err := walk(child, depth+1)
			if err != nil {
				return 0, err
			}
			total += k
			if leaf || k > 0 {
				m.inKeys[c] = true
			}
		}
		state[p], keys[p] = done, total
		return total, nil
	}
	rules, err := walk(root, 0)
	if err != nil {
		return err
	}
	m.rules = rules
	for c := range m.ascii {
		r := &m.ascii[c]
		r.repl, _ = m.Match([]byte{byte(c)})
		r.has = r.repl != nil
		for d := range utf8.RuneSelf {
			if _, n := m.Match([]byte{byte(c), byte(d)}); n == 2 || m.prefix([]byte{byte(c), byte(d)}) {
				r.longer = true
				break
			}
		}
	}
	return nil
}

// prefix reports whether some key longer than s begins with s.
func (m *Map) prefix(s []byte) bool {
	u, size := m.units, uint32(len(m.units))
	p := offset(u[0])
	for _, c := range s {
		p ^= uint32(c)
		if p >= size || label(u[p]) != uint32(c) {
			return false
		}
		p ^= offset(u[p])
	}
	for c := uint32(1); c < 256; c++ {
		if q := p ^ c; q < size && label(u[q]) == c {
			return true
		}
	}
	return false
}

func (m *Map) checkValue(u, at uint32) error {
	v := value(u)
	if uint64(v) >= uint64(len(m.pool)) {
		return fmt.Errorf("%w: unit %d names replacement offset %d, past the %d-byte string pool", ErrCorrupt, at, v, len(m.pool))
	}
	for _, b := range m.pool[v:] {
		if b == 0 {
			return nil
		}
	}
	return fmt.Errorf("%w: the replacement at pool offset %d has no terminating NUL", ErrCorrupt, v)
}

// Len returns the number of rules (keys) the map holds.
func (m *Map) Len() int { return m.rules }

// Match returns the replacement of the longest prefix of s that the map
// holds a rule for, and that prefix's length in bytes; n is 0 when no rule
// matches. The replacement may be empty (the rule deletes its key); it must
// not be modified.
func (m *Map) Match(s []byte) (repl []byte, n int) {
	if len(s) == 0 || !m.starts[s[0]] {
		return nil, 0
	}
	u := m.units
	size := uint32(len(u))
	p := offset(u[0])
	var best uint32
	for i, c := range s {
		p ^= uint32(c)
		if p >= size || label(u[p]) != uint32(c) {
			break
		}
		leaf := hasLeaf(u[p])
		p ^= offset(u[p])
		if leaf {
			best, n = value(u[p]), i+1
		}
	}
	if n == 0 {
		return nil, 0
	}
	r := m.pool[best:]
	for i, b := range r {
		if b == 0 {
			return r[:i:i], n
		}
	}
	return r, n // unreachable for a map Parse accepted
}

// replacementChar is what a byte that starts no valid UTF-8 sequence
// becomes, one byte at a time.
const replacementChar = "\uFFFD"

// Normalize appends src, normalized by the map, to dst and returns the
// result. It works as SentencePiece's normalizer does at each position:
// the longest rule matching there is replaced; with none, a valid UTF-8
// character is copied and a byte that begins no valid character becomes
// U+FFFD. It neither adds nor removes white space, nor escapes it: those
// steps belong to a model's normalizer settings, not to the map.
func (m *Map) Normalize(dst, src []byte) []byte {
	for i := 0; i < len(src); {
		if j := m.plainRun(src, i); j > i {
			dst = append(dst, src[i:j]...)
			i = j
			continue
		}
		if c := src[i]; c < utf8.RuneSelf && (i+1 == len(src) || src[i+1] < utf8.RuneSelf) && !m.ascii[c].longer {
			if r := &m.ascii[c]; r.has {
				dst = append(dst, r.repl...)
			} else {
				dst = append(dst, c)
			}
			i++
			continue
		}
		if repl, n := m.Match(src[i:]); n > 0 {
			dst = append(dst, repl...)
			i += n
			continue
		}
		r, size := utf8.DecodeRune(src[i:])
		if r == utf8.RuneError && size == 1 {
			dst = append(dst, replacementChar...)
		} else {
			dst = append(dst, src[i:i+size]...)
		}
		i += size
	}
	return dst
}

// plainRun returns the end of the run of ASCII bytes from i that the map
// copies unchanged: bytes followed by an ASCII byte, that no rule of their
// own or begun with an ASCII pair touches.
func (m *Map) plainRun(src []byte, i int) int {
	for ; i+1 < len(src); i++ {
		c := src[i]
		if c >= utf8.RuneSelf || src[i+1] >= utf8.RuneSelf {
			break
		}
		if r := &m.ascii[c]; r.has || r.longer {
			break
		}
	}
	return i
}

// ASCII returns the map's rule for the ASCII byte c when it is followed
// by another ASCII byte or by nothing: has says whether c has a rule, repl
// is its replacement, and longer says that a key of more than c begins
// with c and an ASCII byte, so that only Match can tell.
func (m *Map) ASCII(c byte) (repl []byte, has, longer bool) {
	if c >= utf8.RuneSelf {
		return nil, false, true
	}
	r := &m.ascii[c]
	return r.repl, r.has, r.longer
}

// Alone returns what Match gives for s, and alone true when no key longer
// than s begins with s: then that result holds whatever follows s.
func (m *Map) Alone(s []byte) (repl []byte, n int, alone bool) {
	if len(m.units) == 0 {
		return nil, 0, true
	}
	repl, n = m.Match(s)
	return repl, n, !m.prefix(s)
}

// KeysHold reports whether some rule's key holds the byte b.
func (m *Map) KeysHold(b byte) bool { return m.inKeys[b] }

// each calls fn with every rule's key and replacement, in trie order.
func (m *Map) each(fn func(key, repl []byte)) {
	if len(m.units) == 0 {
		return
	}
	key := make([]byte, 0, 16)
	var walk func(p uint32)
	walk = func(p uint32) {
		for c := uint32(1); c < 256; c++ {
			q := p ^ c
			if q >= uint32(len(m.units)) || label(m.units[q]) != c {
				continue
			}
			child := q ^ offset(m.units[q])
			key = append(key, byte(c))
			if hasLeaf(m.units[q]) {
				r := m.pool[value(m.units[child]):]
				for i, b := range r {
					if b == 0 {
						r = r[:i]
						break
					}
				}
				fn(key, r)
			}
			walk(child)
			key = key[:len(key)-1]
		}
	}
	walk(offset(m.units[0]))
}
