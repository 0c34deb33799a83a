package render

import (
	"math"
	"strconv"
	"strings"
	"testing"
)

// luminance and contrast follow the definitions of relative luminance and
// contrast ratio in WCAG 2.1 (W3C Recommendation, 2018), success criterion
// 1.4.3.
func luminance(hex string) float64 {
	v, err := strconv.ParseUint(strings.TrimPrefix(hex, "#"), 16, 32)
	if err != nil {
		panic(err)
	}
	ch := func(c uint64) float64 {
		s := float64(c) / 255
		if s <= 0.03928 {
			return s / 12.92
		}
		return math.Pow((s+0.055)/1.055, 2.4)
	}
	return 0.2126*ch(v>>16&0xff) + 0.7152*ch(v>>8&0xff) + 0.0722*ch(v&0xff)
}

func contrast(a, b string) float64 {
	la, lb := luminance(a), luminance(b)
	if la < lb {
		la, lb = lb, la
	}
	return (la + 0.05) / (lb + 0.05)
}

func TestContrast(t *testing.T) {
	// The formula itself: black on white is 21:1 by the WCAG 2.1
	// definition; #767676 on white is the lightest grey that reaches 4.5:1
	// (common practice), #777777 falls just short.
	if c := contrast("#000000", "#ffffff"); math.Abs(c-21) > 1e-9 {
		t.Fatalf("black on white = %v", c)
	}
	if c := contrast("#767676", "#ffffff"); c < 4.5 || contrast("#777777", "#ffffff") >= 4.5 {
		t.Fatalf("grey threshold wrong: %v", c)
	}
	p := palette
	pairs := []struct{ name, fg, bg string }{
		{"text on page", p.Ink, p.Paper}, {"text on card", p.Ink, p.Card},
		{"muted on page", p.Muted, p.Paper}, {"muted on card", p.Muted, p.Card},
		{"link on page", p.Bar, p.Paper}, {"window label", p.Mark, p.Card}, {"spread label", p.Mean, p.Card},
		{"piece 0", p.Ink, p.Shade[0]}, {"piece 1", p.Ink, p.Shade[1]}, {"piece 2", p.Ink, p.Shade[2]},
		{"1-byte token", p.Ink, p.Bytes[0]}, {"2-3 byte token", p.Ink, p.Bytes[1]}, {"4-5 byte token", p.Ink, p.Bytes[2]}, {"6+ byte token", p.Ink, p.Bytes[3]},
		// The line-feed mark takes the ink colour on the two darkest shades (.b1 .nl, .b2 .nl).
		{"line-feed mark on 4-5 byte token", p.Muted, p.Bytes[2]}, {"line-feed mark on 6+ byte token", p.Muted, p.Bytes[3]},
		{"line-feed mark on piece", p.Muted, p.Shade[1]},
	}
	for _, pr := range pairs {
		if c := contrast(pr.fg, pr.bg); c < 4.5 {
			t.Errorf("%s: %s on %s is %.2f:1, want 4.5:1 or more", pr.name, pr.fg, pr.bg, c)
		}
	}
	// Bars against the card are graphics: WCAG 2.1 criterion 1.4.11 asks
	// 3:1.
	for _, c := range []string{p.Bar, p.Over} {
		if r := contrast(c, p.Card); r < 3 {
			t.Errorf("bar %s on card: %.2f:1, want 3:1", c, r)
		}
	}
}
