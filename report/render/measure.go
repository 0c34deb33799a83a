package render

// A Measure is one figure of a report's totals. A report keeps one list of
// them, which feeds both its totals grid (table, CSV, Markdown) and the
// cards of its HTML page, so the two never drift apart by accident.
type Measure struct {
	Label, Value string
	// CardLabel and CardValue are the card's wording where it differs from
	// the grid's ("" keeps Label or Value).
	CardLabel, CardValue string
	Warn                 bool // the card is marked as a warning
	Only                 Shown
}

// Shown says which views show a Measure.
type Shown uint8

// The views a Measure appears in; the zero value shows it in both.
const (
	InBoth Shown = iota
	InGrid
	InCards
)

// TotalsGrid returns the grid of the measures shown in grids, under the
// title "Totals".
func TotalsGrid(ms []Measure) *Grid {
	g := &Grid{Title: "Totals", Header: []string{"measure", "value"}, Right: []int{1}}
	for _, m := range ms {
		if m.Only != InCards {
			g.AddRow(m.Label, m.Value)
		}
	}
	return g
}

// Cards returns the cards of the measures shown on a page.
func Cards(ms []Measure) []Fact {
	var out []Fact
	for _, m := range ms {
		if m.Only == InGrid {
			continue
		}
		f := Fact{Label: m.Label, Value: m.Value, Warn: m.Warn}
		if m.CardLabel != "" {
			f.Label = m.CardLabel
		}
		if m.CardValue != "" {
			f.Value = m.CardValue
		}
		out = append(out, f)
	}
	return out
}
