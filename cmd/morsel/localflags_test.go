package main

import (
	"io"
	"strings"
	"testing"

	"github.com/spf13/pflag"
)

// localFlags and merge's flags are kept in step: every flag that merge
// defines for the command it runs again is local (or the partials would
// refuse it), and every local flag of a shardable command that is not
// about the process alone can be given to merge again.
func TestLocalFlagsAreMergeFlags(t *testing.T) {
	root := newRootIO(strings.NewReader(""), io.Discard, io.Discard)
	merge, _, err := root.Find([]string{"merge"})
	if err != nil {
		t.Fatal(err)
	}
	merge.Flags().VisitAll(func(f *pflag.Flag) {
		if f.Name != "help" && !processFlags[f.Name] && !localFlags[f.Name] {
			t.Errorf("merge takes --%s, which is not in localFlags: every partial would refuse it", f.Name)
		}
	})
	accepts := func(name string) bool {
		return merge.Flags().Lookup(name) != nil || merge.InheritedFlags().Lookup(name) != nil
	}
	for name := range processFlags {
		if !localFlags[name] {
			t.Errorf("--%s only concerns one process but is not in localFlags", name)
		}
	}
	used := map[string]bool{}
	shardable := 0
	for _, c := range root.Commands() {
		if c.Flags().Lookup("shard") == nil {
			continue
		}
		shardable++
		c.Flags().VisitAll(func(f *pflag.Flag) {
			if !localFlags[f.Name] {
				return
			}
			used[f.Name] = true
			if !processFlags[f.Name] && !accepts(f.Name) {
				t.Errorf("%s --%s is local, but merge does not take it again", c.Name(), f.Name)
			}
		})
		c.InheritedFlags().VisitAll(func(f *pflag.Flag) { used[f.Name] = used[f.Name] || localFlags[f.Name] })
	}
	if shardable < 5 {
		t.Fatalf("only %d commands take --shard", shardable)
	}
	for name := range localFlags {
		if !used[name] {
			t.Errorf("localFlags lists --%s, which no command that shards has", name)
		}
	}
}
