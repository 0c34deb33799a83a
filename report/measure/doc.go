// Package measure measures text without a vocabulary: word boundaries by
// the Unicode rules (UAX #29), the script of a word, and characters and
// words as wc -w counts them.
package measure
