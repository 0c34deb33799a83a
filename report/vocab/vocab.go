// Package vocab describes a vocabulary for the person about to trust its
// counts: its family, its normalizer and pre-tokenizer, its sizes, its
// added and special tokens, the tokens its template adds per request, its
// longest tokens, its tokens per script, and a fingerprint.
package vocab

import (
	"sort"
	"unicode"
	"unicode/utf8"

	"morsel/bpe"
	"morsel/report/measure"
	"morsel/report/render"
)

// Token is one token as a report lists it.
type Token struct {
	ID    int    `json:"id"`
	Text  string `json:"text"` // the text it stands for, or its bytes as <E6> when not UTF-8
	Bytes int    `json:"bytes"`
}

// Count is a number of tokens under a label.
type Count struct {
	Label  string `json:"label"`
	Tokens int    `json:"tokens"`
}

// Result is what Describe finds. Field names are the JSON contract of
// `morsel vocab --format json`.
type Result struct {
	Name         string  `json:"name"`
	Family       string  `json:"family"`
	Tokens       int     `json:"tokens"` // distinct ids
	Merges       int     `json:"merges"`
	Specials     []Token `json:"specials"`
	Added        int     `json:"added"` // added tokens, special or not
	AddedTokens  []Token `json:"added_tokens"`
	Template     []Token `json:"template"` // what the post-processor adds to every request
	Window       *int    `json:"window"`   // null when the vocabulary names none
	ByteFallback bool    `json:"byte_fallback"`
	Normalizer   string  `json:"normalizer"`
	PreTokenizer string  `json:"pre_tokenizer"`
	Longest      []Token `json:"longest"`
	Scripts      []Count `json:"scripts"`
	Fingerprint  string  `json:"fingerprint"`
}

// longestShown is how many of the longest tokens a report lists.
const longestShown = 10

// Describe returns the facts of v.
func Describe(v *bpe.Vocab) *Result {
	r := &Result{Name: v.Name(), Family: v.Family(), Tokens: v.Distinct(), Merges: v.Info().Merges,
		ByteFallback: v.ByteFallback(), Fingerprint: v.Fingerprint(),
		Specials: []Token{}, AddedTokens: []Token{}, Template: []Token{}}
	r.Normalizer, r.PreTokenizer = v.Chain()
	if w := v.Window(); w > 0 {
		r.Window = &w
	}
	for _, s := range v.Specials() {
		r.Specials = append(r.Specials, token(v, s.ID))
	}
	for _, a := range v.Added() {
		r.AddedTokens = append(r.AddedTokens, token(v, a.ID))
	}
	r.Added = len(r.AddedTokens)
	for _, id := range v.Template() {
		r.Template = append(r.Template, token(v, id))
	}
	counts := map[string]int{}
	var all []Token
	for id := 0; id < v.Size(); id++ {
		raw, ok := v.Token(id)
		if !ok || raw == nil {
			continue
		}
		all = append(all, Token{ID: id, Bytes: len(raw)})
		counts[scriptLabel(v, id, raw)]++
	}
	sort.SliceStable(all, func(i, j int) bool { return all[i].Bytes > all[j].Bytes })
	for _, t := range all[:min(longestShown, len(all))] {
		r.Longest = append(r.Longest, token(v, t.ID))
	}
	for label, n := range counts {
		r.Scripts = append(r.Scripts, Count{label, n})
	}
	sort.Slice(r.Scripts, func(i, j int) bool {
		if r.Scripts[i].Tokens != r.Scripts[j].Tokens {
			return r.Scripts[i].Tokens > r.Scripts[j].Tokens
		}
		return r.Scripts[i].Label < r.Scripts[j].Label
	})
	return r
}

func token(v *bpe.Vocab, id int) Token {
	raw, _ := v.Token(id)
	return Token{ID: id, Text: render.PieceText(raw), Bytes: len(raw)}
}

// scriptLabel classes a token by the script of its first letter or digit:
// "byte fallback" for a <0xNN> token, "byte fragments" for bytes that are
// not whole UTF-8, "space and symbols" for the rest.
func scriptLabel(v *bpe.Vocab, id int, raw []byte) string {
	if v.IsByteFallback(id) {
		return "byte fallback"
	}
	if !utf8.Valid(raw) {
		return "byte fragments"
	}
	for _, c := range string(raw) {
		if unicode.IsLetter(c) || unicode.Is(unicode.Nd, c) {
			return measure.ScriptOf(c).String()
		}
	}
	return "space and symbols"
}
