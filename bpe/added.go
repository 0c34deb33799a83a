package bpe

import (
	"bytes"
	"fmt"
	"unicode"
	"unicode/utf8"
)

// addedTok is one of a bundle's added tokens: a string that is always its
// one token, wherever it is found (a special one only when specials are
// honoured).
type addedTok struct {
	id                                   uint32
	content                              []byte
	special, lstrip, rstrip, single, nrm bool
}

// addedSet finds added tokens in a text, leftmost first and the longest
// of those that start at one place.
type addedSet struct {
	toks  []addedTok
	byte0 [256][]int32 // first byte -> tokens, longest first
	one   int          // the only first byte, or -1 when there are several
}

func (a *addedSet) add(t addedTok) {
	a.toks = append(a.toks, t)
	i := int32(len(a.toks) - 1)
	l := a.byte0[t.content[0]]
	at := len(l)
	for k, j := range l {
		if len(a.toks[j].content) < len(t.content) {
			at = k
			break
		}
	}
	l = append(l, 0)
	copy(l[at+1:], l[at:])
	l[at] = i
	a.byte0[t.content[0]] = l
}

func (a *addedSet) finish() {
	a.one = -1
	n := 0
	for b, l := range a.byte0 {
		if len(l) > 0 {
			n++
			a.one = b
		}
	}
	if n != 1 {
		a.one = -1
	}
}

// next returns the first added token in t at or after from: its span with
// the white space that lstrip and rstrip take, and its index; idx is -1
// when there is none. Special tokens are skipped (their text stays text)
// unless honor is set.
func (a *addedSet) next(t []byte, from int, honor bool) (start, end, idx int) {
	if len(a.toks) == 0 {
		return 0, 0, -1
	}
	for i := from; i < len(t); i++ {
		if a.one >= 0 {
			j := bytes.IndexByte(t[i:], byte(a.one))
			if j < 0 {
				return 0, 0, -1
			}
			i += j
		}
		l := a.byte0[t[i]]
		if len(l) == 0 {
			continue
		}
		for _, k := range l {
			tk := &a.toks[k]
			e := i + len(tk.content)
			if !bytes.HasPrefix(t[i:], tk.content) {
				continue
			}
			// The longest token here is the match; if it does not count,
			// the text goes on as text past it.
			if tk.special && !honor {
				i = e - 1
				break
			}
			if tk.single && (endsWord(t[:i]) || startsWord(t[e:])) {
				i = e - 1
				break
			}
			s := i
			if tk.lstrip {
				for s > from {
					r, n := utf8.DecodeLastRune(t[from:s])
					if !unicode.IsSpace(r) {
						break
					}
					s -= n
				}
			}
			if tk.rstrip {
				for e < len(t) {
					r, n := utf8.DecodeRune(t[e:])
					if !unicode.IsSpace(r) {
						break
					}
					e += n
				}
			}
			return s, e, int(k)
		}
	}
	return 0, 0, -1
}

// endsWord and startsWord tell whether a single_word token touches a word
// character (a letter or a number) on that side.
func endsWord(t []byte) bool {
	r, n := utf8.DecodeLastRune(t)
	return n > 0 && (unicode.IsLetter(r) || unicode.IsNumber(r))
}

func startsWord(t []byte) bool {
	r, n := utf8.DecodeRune(t)
	return n > 0 && (unicode.IsLetter(r) || unicode.IsNumber(r))
}

// addTokens records a bundle's added tokens: those matched in the raw text
// in p.added, those matched after normalization in p.addedNorm.
func (p *pipeline) addTokens(file string, v *Vocab, specs []addedSpec, spell [][]byte) error {
	seen := map[string]int{}
	for i, a := range specs {
		content := []byte(*a.Content)
		id := *a.ID
		if t := v.tokens[id]; t != nil && !(spell[id] != nil && string(spell[id]) == *a.Content) && !bytes.Equal(t, content) {
			return &posError{file, 0, fmt.Sprintf("added_tokens[%d] %q has id %d, which the vocabulary gives to %q", i, *a.Content, id, spell[id])}
		}
		if first, dup := seen[*a.Content]; dup {
			return &posError{file, 0, fmt.Sprintf("added_tokens[%d] %q repeats added_tokens[%d]", i, *a.Content, first)}
		}
		seen[*a.Content] = i
		nrm := !a.Special
		if a.Normalized != nil {
			nrm = *a.Normalized
		}
		t := addedTok{id: uint32(id), content: content, special: a.Special, lstrip: a.Lstrip, rstrip: a.Rstrip, single: a.SingleWord, nrm: nrm}
		if v.tokens[id] == nil {
			v.tokens[id] = content
		}
		p.addedIDs = append(p.addedIDs, uint32(id))
		if nrm && p.norm != nil {
			// Matched in normalized text, in its normalized form.
			s := newState(v, 16)
			nc, _ := p.norm.normalize(s, content, nil)
			if len(nc) == 0 {
				continue
			}
			t.content = bytes.Clone(nc)
			p.addedNorm.add(t)
			p.added.toks = append(p.added.toks, addedTok{id: t.id, content: content, special: t.special, nrm: true})
			continue
		}
		p.added.add(t)
	}
	p.added.finish()
	p.addedNorm.finish()
	return nil
}

// isAdded reports whether id is an added token.
func (p *pipeline) isAdded(id int) bool {
	for _, a := range p.addedIDs {
		if int(a) == id {
			return true
		}
	}
	return false
}
