package manpage

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/spf13/cobra"
)

func TestWrite(t *testing.T) {
	root := &cobra.Command{Use: "morsel", Short: "weigh documents"}
	root.Flags().String("format", "table", "output format")
	root.AddCommand(&cobra.Command{Use: "survey PATH...", Short: "weigh a document set", Run: func(*cobra.Command, []string) {}})
	dir := t.TempDir()
	names, err := Write(root, dir)
	if err != nil {
		t.Fatal(err)
	}
	if strings.Join(names, " ") != "morsel-survey.1 morsel.1" {
		t.Errorf("pages %q", names)
	}
	page, _ := os.ReadFile(filepath.Join(dir, "morsel-survey.1"))
	// .TH title section date source manual, as man-pages(7) describes it.
	if !strings.Contains(string(page), `.TH "MORSEL" "1" "Dec 2026" "morsel" "morsel manual"`) {
		t.Errorf("no fixed header in\n%s", page)
	}
	again := t.TempDir()
	Write(root, again)
	second, _ := os.ReadFile(filepath.Join(again, "morsel-survey.1"))
	if string(second) != string(page) {
		t.Error("two runs wrote different pages")
	}
}
