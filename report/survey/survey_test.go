package survey

import (
	"bytes"
	"encoding/json"
	"errors"
	"math"
	"strings"
	"testing"

	"morsel/bpe"
	"morsel/report"
	"morsel/report/render"
)

// The streamed survey JSON is the same document as encoding/json gives.

func TestSurveyJSONStreamsTheSameObject(t *testing.T) {
	for _, n := range []int{0, 1, 3} {
		sv := NewSurveyor(bpe.Default().Info())
		for i := 0; i < n; i++ {
			sv.s.Documents = append(sv.s.Documents, Weight{Source: "a<b>.txt", Record: i, Format: "text", Bytes: 10, Tokens: 3 + i})
		}
		s := sv.Finish([]report.Skipped{{Source: "x", Reason: "binary"}})
		var streamed, whole bytes.Buffer
		if err := Write(&streamed, render.JSON, s, 0); err != nil {
			t.Fatal(err)
		}
		if err := render.WriteJSON(&whole, s); err != nil {
			t.Fatal(err)
		}
		var a, b any
		if err := json.Unmarshal(streamed.Bytes(), &a); err != nil {
			t.Fatalf("streamed JSON does not parse: %v\\n%s", err, streamed.String())
		}
		json.Unmarshal(whole.Bytes(), &b)
		ja, _ := json.Marshal(a)
		jb, _ := json.Marshal(b)
		if !bytes.Equal(ja, jb) {
			t.Fatalf("%d documents: streamed and whole JSON differ:\\n%s\\n%s", n, ja, jb)
		}
	}
}

// A total that would pass 2^63-1 is an error naming the document, and the
// document is left out of every part of the report; the histogram of a
// count near 2^62 ends (its bins once doubled past the largest int).
func TestSurveyTotalOverflow(t *testing.T) {
	sv := NewSurveyor(bpe.Default().Info())
	half := Weight{Source: "a.txt", Format: "text", Bytes: 10, Tokens: math.MaxInt64/2 + 1}
	if err := sv.Add(half); err != nil {
		t.Fatal(err)
	}
	half.Source = "b.txt"
	err := sv.Add(half)
	if !errors.Is(err, report.ErrTotalOverflow) || !strings.Contains(err.Error(), "b.txt") {
		t.Fatalf("second half of 2^63 tokens: %v", err)
	}
	s := sv.Finish(nil)
	if s.Totals.Documents != 1 || s.Totals.Tokens != math.MaxInt64/2+1 || len(s.Documents) != 1 {
		t.Fatalf("after the overflow: %+v, %d rows", s.Totals, len(s.Documents))
	}
	big := Weight{Source: "c.txt", Format: "text", Bytes: math.MaxInt64, Tokens: 1}
	if err := sv.Add(big); !errors.Is(err, report.ErrTotalOverflow) {
		t.Fatalf("2^63-1 bytes after 10: %v", err)
	}
}
