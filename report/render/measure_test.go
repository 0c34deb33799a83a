package render

import (
	"reflect"
	"testing"
)

func TestMeasuresFeedGridAndCards(t *testing.T) {
	ms := []Measure{
		{Label: "documents", Value: "3"},
		{Label: "characters", Value: "90", Only: InGrid},
		{Label: "window", Value: "1,024", Only: InCards},
		{Label: "not counted", Value: "2 (1 failed)", CardLabel: "not counted, 1 failed", CardValue: "2", Warn: true},
	}
	g := TotalsGrid(ms)
	if want := [][]string{{"documents", "3"}, {"characters", "90"}, {"not counted", "2 (1 failed)"}}; !reflect.DeepEqual(g.Rows, want) || g.Title != "Totals" {
		t.Errorf("grid %q %q, want %q", g.Title, g.Rows, want)
	}
	want := []Fact{{Label: "documents", Value: "3"}, {Label: "window", Value: "1,024"}, {Label: "not counted, 1 failed", Value: "2", Warn: true}}
	if got := Cards(ms); !reflect.DeepEqual(got, want) {
		t.Errorf("cards %+v, want %+v", got, want)
	}
}
