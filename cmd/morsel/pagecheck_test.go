package main

import (
	"context"
	"errors"
	"os"
	"testing"
	"time"

	"morsel/internal/pagecheck"
)

// TestPagesKeepTextInTheirBoxes renders every HTML page of the demo in
// headless Chromium, when it is installed, and fails on text that leaves
// its box (pagecheck). MORSEL_PAGECHECK_DIR names a large folder to check
// as well, such as /usr/share/doc.
func TestPagesKeepTextInTheirBoxes(t *testing.T) {
	if _, err := pagecheck.Browser(); errors.Is(err, pagecheck.ErrNoBrowser) {
		t.Skip(err)
	}
	dirs := []string{demoDir}
	if d := os.Getenv("MORSEL_PAGECHECK_DIR"); d != "" {
		dirs = append(dirs, d)
	}
	ctx, cancel := context.WithTimeout(context.Background(), 5*time.Minute)
	defer cancel()
	for _, dir := range dirs {
		for _, cmd := range [][]string{{"survey"}, {"fit"}, {"quote", "--targets", demoTargets}, {"fragments"}} {
			args := append([]string{cmd[0], dir, "--format", "html", "--quiet"}, cmd[1:]...)
			page, serr, code := runMorsel(t, args...)
			if code > 3 || page == "" {
				t.Fatalf("%q: exit %d: %s", args, code, serr)
			}
			for _, width := range []int{1200, 800} {
				problems, err := pagecheck.Check(ctx, []byte(page), width)
				if err != nil {
					t.Fatal(err)
				}
				for _, p := range problems {
					t.Errorf("%s %s at %d px: %s", cmd[0], dir, width, p)
				}
			}
		}
	}
}
