package main

import (
	"strconv"

	"github.com/spf13/cobra"

	"morsel/report/request"
)

// flagFloor is the smallest and largest value each numeric flag takes,
// and what the smallest value means where that needs saying. A flag a
// command does not have is not checked. Token counts stop at maxTokens,
// so that no sum of a request's parts can overflow.
var flagFloor = []struct {
	name     string
	min, max int
	hint     string
}{
	{"workers", 1, maxWorkers, "documents encoded at once"},
	{"width", 0, maxTokens, "0 fits tables to the terminal"},
	{"rows", 0, maxTokens, "0 lists them all"},
	{"doc-rows", 0, maxTokens, "0 lists them all"},
	{"top", 0, maxTokens, "0 lists them all"},
	{"window", 1, maxTokens, "a window is a positive number of tokens"},
	{"budget", 1, maxTokens, "a budget is a positive number of tokens"},
	{"reserve", 0, maxTokens, "0 reserves no answer"},
	{"overhead", 0, maxTokens, "0 adds nothing"},
	{"overlap", 0, maxTokens, "0 overlaps nothing"},
	{"answer-tokens", 0, maxTokens, "0 expects no answer"},
	{"add", 0, maxTokens, "the merges to learn"},
	{"words", 0, maxTokens, "words listed per new token"},
}

// maxTokens is the largest token count a flag takes, as a targets file's
// window and answer_tokens (request.MaxTokens): a window of two billion
// tokens is far past any model's.
const maxTokens = request.MaxTokens

// checkFloors returns a usage error for the first numeric flag given below
// its floor.
func checkFloors(c *cobra.Command) error {
	for _, fl := range flagFloor {
		f := c.Flags().Lookup(fl.name)
		if f == nil || !f.Changed {
			continue
		}
		n, err := strconv.Atoi(f.Value.String())
		if err != nil {
			continue
		}
		if n < fl.min {
			return usagef(c.Name(), "--%s %d: give %d or more (%s)", fl.name, n, fl.min, fl.hint)
		}
		if fl.name == "workers" && n > maxWorkers {
			return usagef(c.Name(), "--workers %d: give at most %d (each worker keeps its own word cache)", n, maxWorkers)
		}
		if n > fl.max {
			return usagef(c.Name(), "--%s %d: give at most %d", fl.name, n, fl.max)
		}
	}
	return nil
}

// maxWorkers is the most workers a run takes: past a few per core they only
// cost memory, and a billion of them would exhaust the runtime.
const maxWorkers = 1024
