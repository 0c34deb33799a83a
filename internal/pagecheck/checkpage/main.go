// Command checkpage renders morsel's HTML pages in headless Chromium and
// prints every place where text does not stay in its box. It exits 1 when
// a page has a problem, 2 when the check cannot run.
//
//	go run ./internal/pagecheck/checkpage [-width PX] PAGE.html...
package main

import (
	"context"
	"flag"
	"fmt"
	"os"

	"morsel/internal/pagecheck"
)

func main() {
	width := flag.Int("width", 1200, "window width in CSS pixels")
	flag.Parse()
	status := 0
	for _, path := range flag.Args() {
		page, err := os.ReadFile(path)
		if err != nil {
			fmt.Fprintln(os.Stderr, err)
			os.Exit(2)
		}
		problems, err := pagecheck.Check(context.Background(), page, *width)
		if err != nil {
			fmt.Fprintf(os.Stderr, "%s: %v\n", path, err)
			os.Exit(2)
		}
		fmt.Printf("%s at %d px: %d problem(s)\n", path, *width, len(problems))
		for _, p := range problems {
			fmt.Printf("  %s\n", p)
		}
		if len(problems) > 0 {
			status = 1
		}
	}
	os.Exit(status)
}
