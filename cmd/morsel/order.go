package main

import (
	"strings"

	"github.com/spf13/cobra"

	"morsel/report"
)

// sortFlag is --sort, the order of a command's per-document table.
type sortFlag struct {
	name   string
	orders []report.Order
}

func addSortFlag(c *cobra.Command, sf *sortFlag, orders []report.Order) {
	sf.orders = orders
	names := make([]string, len(orders))
	for i, o := range orders {
		names[i] = string(o)
	}
	c.Flags().StringVar(&sf.name, "sort", "", "order of the per-document table: "+strings.Join(names, ", ")+" (default: the input's order)")
	c.RegisterFlagCompletionFunc("sort", func(*cobra.Command, []string, string) ([]string, cobra.ShellCompDirective) {
		return names, cobra.ShellCompDirectiveNoFileComp
	})
}

// order returns the order --sort names.
func (sf *sortFlag) order(cmd string) (report.Order, error) {
	o, err := report.ParseOrder(sf.name, sf.orders...)
	if err != nil {
		return "", usagef(cmd, "--sort: %v", err)
	}
	return o, nil
}
