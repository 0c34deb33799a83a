package survey

import (
	"bytes"
	"encoding/json"
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
