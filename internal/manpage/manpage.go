// Package manpage writes the manual pages of a cobra command tree: one
// roff page per command, in section 1, the same for the same tree.
package manpage

import (
	"fmt"
	"os"
	"path/filepath"
	"time"

	"github.com/spf13/cobra"
	"github.com/spf13/cobra/doc"
)

// date is the date printed in every page's footer. A fixed date keeps the
// pages the same from run to run, so a test can tell when they are stale.
var date = time.Date(2026, 12, 1, 0, 0, 0, 0, time.UTC)

// Write writes root's pages into dir, which it creates, and returns their
// file names.
func Write(root *cobra.Command, dir string) ([]string, error) {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return nil, err
	}
	root.DisableAutoGenTag = true
	header := &doc.GenManHeader{Title: "MORSEL", Section: "1", Date: &date, Source: "morsel", Manual: "morsel manual"}
	if err := doc.GenManTree(root, header, dir); err != nil {
		return nil, fmt.Errorf("writing manual pages: %w", err)
	}
	names, err := filepath.Glob(filepath.Join(dir, "*.1"))
	if err != nil {
		return nil, err
	}
	for i, n := range names {
		names[i] = filepath.Base(n)
	}
	return names, nil
}
