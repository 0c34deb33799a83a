package main

import (
	"github.com/spf13/cobra"
)

// Values that the shell completes for flags (cobra's completion command
// writes the scripts: morsel completion bash|zsh|fish|powershell).
var (
	formatNames  = []string{"table", "json", "csv", "md", "html", "partial"}
	asNames      = []string{"text", "markdown", "code", "html", "jsonl", "json", "csv", "tsv"}
	specialNames = []string{"text", "honor"}
)

// fixed completes a flag with the given values and no file names.
func fixed(values ...string) func(*cobra.Command, []string, string) ([]string, cobra.ShellCompDirective) {
	return func(*cobra.Command, []string, string) ([]string, cobra.ShellCompDirective) {
		return values, cobra.ShellCompDirectiveNoFileComp
	}
}

// completeTargets completes --target with the names in the targets file
// that --targets names, or in morsel.toml in the working folder.
func completeTargets(tf *targetFlags) func(*cobra.Command, []string, string) ([]string, cobra.ShellCompDirective) {
	return func(*cobra.Command, []string, string) ([]string, cobra.ShellCompDirective) {
		ts, err := tf.load("", false)
		if err != nil || ts == nil {
			return nil, cobra.ShellCompDirectiveNoFileComp
		}
		names := make([]string, len(ts.List))
		for i, t := range ts.List {
			names[i] = t.Name
		}
		return names, cobra.ShellCompDirectiveNoFileComp
	}
}
