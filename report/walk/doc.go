// Package walk hands the documents of a corpus to a fixed pool of workers
// and gives their results back in input order.
package walk
