package pagecheck

import (
	"context"
	"errors"
	"strings"
	"testing"
	"time"
)

func TestCheck(t *testing.T) {
	if _, err := Browser(); errors.Is(err, ErrNoBrowser) {
		t.Skip(err)
	}
	ctx, cancel := context.WithTimeout(context.Background(), 60*time.Second)
	defer cancel()
	bad := `<!DOCTYPE html><html><body>
<div style="width:60px;overflow:hidden"><span class="v" style="display:block">103,090,277</span></div>
<table style="width:80px"><tr><td class="num">0.031382 EUR</td></tr></table>
<svg width="200" height="40"><text x="10" y="20">one token a word</text><text x="20" y="22">script</text></svg>
<h2>By file type</h2><h3>By file type</h3>
</body></html>`
	problems, err := Check(ctx, []byte(bad), 800)
	if err != nil {
		t.Fatal(err)
	}
	all := strings.Join(problems, "\n")
	for _, want := range []string{`overflows its box`, `wraps onto 2 lines: td.num "0.031382 EUR"`, `svg labels collide: "one token a word" and "script"`, `heading repeated: "By file type"`} {
		if !strings.Contains(all, want) {
			t.Errorf("no %q among\n%s", want, all)
		}
	}
	good := `<!DOCTYPE html><html><body><div style="width:200px"><span class="v">103.1 M</span></div>
<table><tr><td class="num" style="white-space:nowrap">0.031382 EUR</td></tr></table></body></html>`
	if problems, err := Check(ctx, []byte(good), 800); err != nil || len(problems) > 0 {
		t.Errorf("a clean page: %q, %v", problems, err)
	}
	if _, err := Check(ctx, []byte("no body"), 800); err == nil {
		t.Error("a page without </body> was checked")
	}
}
