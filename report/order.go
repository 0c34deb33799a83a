package report

import (
	"fmt"
	"sort"
	"strings"
)

// Order is the order of a per-document table.
type Order string

// The orders of --sort. Input order, the default, is the walk's.
const (
	InputOrder Order = ""
	ByTokens   Order = "tokens"   // most tokens first
	ByBytes    Order = "bytes"    // most bytes first
	ByName     Order = "name"     // by source, then record
	ByOverflow Order = "overflow" // furthest over the window first, then the rest by tokens
)

// ParseOrder returns the order named s, if it is one of allowed.
func ParseOrder(s string, allowed ...Order) (Order, error) {
	if s == "" {
		return InputOrder, nil
	}
	names := make([]string, len(allowed))
	for i, o := range allowed {
		if string(o) == s {
			return o, nil
		}
		names[i] = string(o)
	}
	return "", fmt.Errorf("order %q: want one of %s", s, strings.Join(names, ", "))
}

// DocKey is what the orders compare in one document.
type DocKey struct {
	Source        string
	Record        int
	Tokens, Bytes int64
	Over          int64 // how far past the window (0 or less when it fits)
}

// SortDocs sorts docs in order o, stably, ties in name order.
func SortDocs[T any](docs []T, o Order, key func(*T) DocKey) {
	if o == InputOrder {
		return
	}
	byName := func(a, b DocKey) bool {
		if a.Source != b.Source {
			return a.Source < b.Source
		}
		return a.Record < b.Record
	}
	sort.SliceStable(docs, func(i, j int) bool {
		a, b := key(&docs[i]), key(&docs[j])
		switch o {
		case ByTokens:
			if a.Tokens != b.Tokens {
				return a.Tokens > b.Tokens
			}
		case ByBytes:
			if a.Bytes != b.Bytes {
				return a.Bytes > b.Bytes
			}
		case ByOverflow:
			if a.Over != b.Over {
				return a.Over > b.Over
			}
			if a.Tokens != b.Tokens {
				return a.Tokens > b.Tokens
			}
		}
		return byName(a, b)
	})
}
