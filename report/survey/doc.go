// Package survey weighs a document set: bytes, characters, words and
// tokens per document and in total, with their spread.
package survey
