package request

import (
	"fmt"
	"path/filepath"
	"strconv"
	"strings"

	"github.com/pelletier/go-toml/v2/unstable"
	"github.com/shopspring/decimal"

	"morsel/internal/textfile"
)

// MaxTokens is the largest window or answer_tokens a targets file takes
// (the largest 32-bit count), and the commands' token flags too: with it,
// no request's parts can overflow when added.
const MaxTokens = 1<<31 - 1

// MaxAnswerRatio is the largest answer_ratio a targets file takes: an
// answer a thousand times its request is past any real use, and a bound
// keeps ratio x input within range.
const MaxAnswerRatio = 1000

// MaxPrice is the largest price_in or price_out (per million tokens) a
// targets file takes, and MaxPriceDecimals the most decimal places, so
// that a typo cannot print a cost hundreds of digits long.
const (
	MaxPrice         = 1_000_000
	MaxPriceDecimals = 12
)

// Answer is the number of answer tokens a request expects: a fixed count,
// or a ratio of the request's input tokens. The zero value expects none.
type Answer struct {
	Tokens  int
	Ratio   decimal.Decimal
	ByRatio bool
}

// For returns the answer tokens for a request of input tokens: Tokens, or
// Ratio x input rounded up to a whole token.
func (a Answer) For(input int) int {
	if !a.ByRatio {
		return a.Tokens
	}
	return int(a.Ratio.Mul(decimal.NewFromInt(int64(input))).Ceil().IntPart())
}

// Budget returns the largest input that leaves room for its answer in a
// window: window - Tokens, or the largest n with n + For(n) <= window.
func (a Answer) Budget(window int) int {
	if !a.ByRatio {
		return window - a.Tokens
	}
	// n + ceil(r n) <= w; start from floor(w / (1 + r)) and step down.
	one := decimal.NewFromInt(1)
	n := int(decimal.NewFromInt(int64(window)).Div(one.Add(a.Ratio)).Floor().IntPart())
	for n > 0 && n+a.For(n) > window {
		n--
	}
	return n
}

// String describes the answer for reports.
func (a Answer) String() string {
	if a.ByRatio {
		return a.Ratio.String() + " x input"
	}
	return strconv.Itoa(a.Tokens) + " tokens"
}

// Target is a named bundle of vocabulary, window, frame and prices from a
// targets file. Paths are resolved against the file's folder.
type Target struct {
	Name          string
	File          string // the targets file
	Line          int    // the line of its [target.NAME] header
	Vocab, Merges string // "" for the embedded default
	Window        int    // 0: the vocabulary's
	Frame         string // "" for no frame
	PriceIn       decimal.Decimal
	PriceOut      decimal.Decimal
	Currency      string
	Answer        Answer
	BatchDiscount decimal.Decimal // the share taken off in batch mode, in [0, 1)
	// Set names the fields the file gives.
	Set map[string]bool
}

// Where returns "file:line" of the target's header.
func (t *Target) Where() string { return fmt.Sprintf("%s:%d", t.File, t.Line) }

// Targets is a parsed targets file.
type Targets struct {
	File string
	List []*Target // in file order
}

// Lookup returns the target called name.
func (ts *Targets) Lookup(name string) (*Target, error) {
	var names []string
	for _, t := range ts.List {
		if t.Name == name {
			return t, nil
		}
		names = append(names, t.Name)
	}
	return nil, fmt.Errorf("%s: no target %q (the file has: %s)", ts.File, name, strings.Join(names, ", "))
}

// TargetsError is a mistake in a targets file, at a line.
type TargetsError struct {
	File string
	Line int
	Msg  string
}

func (e *TargetsError) Error() string { return fmt.Sprintf("%s:%d: %s", e.File, e.Line, e.Msg) }

// targetFields are the keys a [target.NAME] table may hold.
var targetFields = map[string]bool{"vocab": true, "merges": true, "window": true, "frame": true, "price_in": true,
	"price_out": true, "currency": true, "answer_tokens": true, "answer_ratio": true, "batch_discount": true}

// ParseTargets parses a targets file; name is its path, used in errors and
// to resolve the relative paths it holds. Unknown tables and fields, values
// of the wrong type or out of range, and fields given twice are errors
// naming the file and line.
func ParseTargets(name string, data []byte) (ts *Targets, err error) {
	ts = &Targets{File: name}
	dir := filepath.Dir(name)
	var p unstable.Parser
	p.Reset(data)
	line := func(r unstable.Range) int {
		if int(r.Offset) > len(data) {
			return 0
		}
		return textfile.Line(data, int64(r.Offset))
	}
	fail := func(ln int, format string, args ...any) error {
		return &TargetsError{File: name, Line: ln, Msg: fmt.Sprintf(format, args...)}
	}
	var cur *Target
	for p.NextExpression() {
		expr := p.Expression()
		switch expr.Kind {
		case unstable.Table:
			keys, ln := keyParts(expr, line)
			if len(keys) != 2 || keys[0] != "target" {
				return nil, fail(ln, "table [%s]: want [target.NAME]", strings.Join(keys, "."))
			}
			for _, t := range ts.List {
				if t.Name == keys[1] {
					return nil, fail(ln, "target %q is defined twice (first on line %d)", keys[1], t.Line)
				}
			}
			cur = &Target{Name: keys[1], File: name, Line: ln, Set: map[string]bool{}}
			ts.List = append(ts.List, cur)
		case unstable.ArrayTable:
			keys, ln := keyParts(expr, line)
			return nil, fail(ln, "array of tables [[%s]]: want [target.NAME] tables", strings.Join(keys, "."))
		case unstable.KeyValue:
			keys, ln := keyParts(expr, line)
			key := strings.Join(keys, ".")
			if cur == nil {
				return nil, fail(ln, "%s: a field outside any [target.NAME] table", key)
			}
			if len(keys) != 1 || !targetFields[keys[0]] {
				return nil, fail(ln, "target %q: unknown field %q (known: vocab, merges, window, frame, price_in, price_out, currency, answer_tokens, answer_ratio, batch_discount)", cur.Name, key)
			}
			if cur.Set[key] {
				return nil, fail(ln, "target %q: %s given twice", cur.Name, key)
			}
			cur.Set[key] = true
			if err := setField(cur, key, expr.Value(), dir); err != nil {
				return nil, fail(ln, "target %q: %s: %v", cur.Name, key, err)
			}
		}
	}
	if err := p.Error(); err != nil {
		ln := 0
		if pe, ok := err.(*unstable.ParserError); ok && pe.Highlight != nil {
			off := cap(data) - cap(pe.Highlight)
			if off >= 0 && off <= len(data) {
				ln = textfile.Line(data, int64(off))
			}
		}
		return nil, fail(ln, "%v", err)
	}
	for _, t := range ts.List {
		if t.Set["answer_tokens"] && t.Set["answer_ratio"] {
			return nil, fail(t.Line, "target %q: give answer_tokens or answer_ratio, not both", t.Name)
		}
		if t.Set["merges"] && !t.Set["vocab"] {
			return nil, fail(t.Line, "target %q: merges needs vocab", t.Name)
		}
	}
	if len(ts.List) == 0 {
		return nil, fail(1, "no [target.NAME] table")
	}
	return ts, nil
}

// keyParts returns the parts of a table header's or key-value's key, and
// its line.
func keyParts(n *unstable.Node, line func(unstable.Range) int) ([]string, int) {
	var parts []string
	ln := 0
	it := n.Key()
	for it.Next() {
		k := it.Node()
		if ln == 0 {
			ln = line(k.Raw)
		}
		parts = append(parts, string(k.Data))
	}
	return parts, ln
}

func setField(t *Target, key string, v *unstable.Node, dir string) error {
	switch key {
	case "vocab", "merges", "frame", "currency":
		s, err := stringValue(v)
		if err != nil {
			return err
		}
		if s == "" {
			return fmt.Errorf("empty string")
		}
		if key != "currency" && !filepath.IsAbs(s) {
			s = filepath.Join(dir, s)
		}
		switch key {
		case "vocab":
			t.Vocab = s
		case "merges":
			t.Merges = s
		case "frame":
			t.Frame = s
		default:
			t.Currency = s
		}
	case "window", "answer_tokens":
		n, err := intValue(v)
		if err != nil {
			return err
		}
		if key == "window" {
			if n < 1 {
				return fmt.Errorf("%d: want a positive number of tokens", n)
			}
			t.Window = n
		} else {
			if n < 0 {
				return fmt.Errorf("%d: want 0 or more tokens", n)
			}
			t.Answer = Answer{Tokens: n}
		}
	case "price_in", "price_out", "answer_ratio", "batch_discount":
		d, err := decimalValue(v)
		if err != nil {
			return err
		}
		if d.IsNegative() {
			return fmt.Errorf("%s: want 0 or more", d)
		}
		if (key == "price_in" || key == "price_out") && (d.GreaterThan(decimal.NewFromInt(MaxPrice)) || -d.Exponent() > MaxPriceDecimals && !d.Equal(d.Round(MaxPriceDecimals))) {
			return fmt.Errorf("%s: want a price from 0 to %d per million tokens, with at most %d decimal places", v.Data, MaxPrice, MaxPriceDecimals)
		}
		if key == "answer_ratio" && d.GreaterThan(decimal.NewFromInt(MaxAnswerRatio)) {
			return fmt.Errorf("%s: want a ratio from 0 to %d", v.Data, MaxAnswerRatio)
		}
		switch key {
		case "price_in":
			t.PriceIn = d
		case "price_out":
			t.PriceOut = d
		case "answer_ratio":
			t.Answer = Answer{Ratio: d, ByRatio: true}
		default:
			if d.GreaterThanOrEqual(decimal.NewFromInt(1)) {
				return fmt.Errorf("%s: want a share below 1 (0.5 takes half off)", d)
			}
			t.BatchDiscount = d
		}
	}
	return nil
}

func stringValue(v *unstable.Node) (string, error) {
	if v.Kind != unstable.String {
		return "", fmt.Errorf("want a string, got %s", kindName(v))
	}
	return string(v.Data), nil
}

func intValue(v *unstable.Node) (int, error) {
	if v.Kind != unstable.Integer {
		return 0, fmt.Errorf("want a whole number, got %s", kindName(v))
	}
	n, err := strconv.ParseInt(strings.ReplaceAll(string(v.Data), "_", ""), 0, 32)
	if err != nil {
		return 0, fmt.Errorf("%s: want a whole number that fits 32 bits", v.Data)
	}
	return int(n), nil
}

// decimalValue reads a number exactly from its literal text (or a string
// holding a decimal number), so that 0.40 is four tenths, not the binary
// float nearest to it.
func decimalValue(v *unstable.Node) (decimal.Decimal, error) {
	switch v.Kind {
	case unstable.Integer, unstable.Float, unstable.String:
	default:
		return decimal.Decimal{}, fmt.Errorf("want a number, got %s", kindName(v))
	}
	s := strings.TrimPrefix(strings.ReplaceAll(string(v.Data), "_", ""), "+")
	if s == "" || strings.ContainsAny(s, "xXoObB") || strings.Contains(s, "inf") || strings.Contains(s, "nan") {
		return decimal.Decimal{}, fmt.Errorf("%q: want a decimal number such as 0.40", string(v.Data))
	}
	d, err := decimal.NewFromString(s)
	if err != nil {
		return decimal.Decimal{}, fmt.Errorf("%q: want a decimal number such as 0.40", string(v.Data))
	}
	return d, nil
}

func kindName(v *unstable.Node) string {
	switch v.Kind {
	case unstable.String:
		return "a string"
	case unstable.Integer:
		return "an integer"
	case unstable.Float:
		return "a float"
	case unstable.Bool:
		return "a boolean"
	case unstable.Array:
		return "an array"
	case unstable.InlineTable:
		return "a table"
	}
	return "a " + strings.ToLower(v.Kind.String())
}
