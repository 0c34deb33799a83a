package main

import (
	"strings"
	"testing"
)

// Every command that offers --format html writes one whole page on
// standard output, with nothing loaded from elsewhere.
func TestHTMLFormats(t *testing.T) {
	demo := "../../testdata/demo/docs"
	targets := "../../testdata/demo/settings/morsel.toml"
	for _, c := range []struct {
		args []string
		code int
	}{
		{[]string{"survey", demo, "--format", "html"}, 0},
		{[]string{"survey", demo, "--format", "html", "--sample", demo + "/memo-ja-kirisaki-shipping.txt"}, 0},
		{[]string{"fit", demo, "--format", "html", "--targets", targets, "--target", "harbor-small"}, 3},
		{[]string{"quote", demo, "--format", "html", "--targets", targets}, 0},
		{[]string{"fragments", demo, "--format", "html", "--terms", "../../testdata/demo/settings/terms.txt"}, 0},
	} {
		out, errs, code := run(t, "", c.args...)
		if code != c.code {
			t.Fatalf("%v: exit %d, want %d\n%s", c.args, code, c.code, errs)
		}
		low := strings.ToLower(out)
		if !strings.HasPrefix(low, "<!doctype html") || !strings.HasSuffix(strings.TrimSpace(low), "</html>") {
			t.Fatalf("%v: not one whole page: %.80q ... %.40q", c.args, out, out[max(0, len(out)-40):])
		}
		// The SVG namespace is a name, not something loaded.
		low = strings.ReplaceAll(low, `xmlns="http://www.w3.org/2000/svg"`, "")
		for _, bad := range []string{"<script", "<link", `src="`, `href="http`, `href="//`, "url(", "@import"} {
			if strings.Contains(low, bad) {
				t.Fatalf("%v: the page holds %q", c.args, bad)
			}
		}
	}
}
