// Command mkcompact writes the compact form of a vocabulary pair, the file
// that the bpe package embeds as its default.
package main

import (
	"flag"
	"fmt"
	"os"

	"morsel/bpe"
)

func main() {
	vocab := flag.String("vocab", "", "vocabulary JSON file")
	merges := flag.String("merges", "", "merges file")
	window := flag.Int("window", 0, "context window of the model, in tokens")
	name := flag.String("name", "", "vocabulary name")
	out := flag.String("o", "", "output file")
	flag.Parse()
	v, err := bpe.LoadFiles(*vocab, *merges)
	if err != nil {
		fmt.Fprintln(os.Stderr, "mkcompact:", err)
		os.Exit(1)
	}
	v.SetWindow(*window)
	v.SetName(*name)
	if err := os.WriteFile(*out, v.AppendCompact(nil), 0o644); err != nil {
		fmt.Fprintln(os.Stderr, "mkcompact:", err)
		os.Exit(1)
	}
}
