// Package quote estimates the bill of a batch job, per document and in
// total, under one or more targets' prices.
package quote
