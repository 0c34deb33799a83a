// Package bpe turns text into a model's byte-pair-encoding tokens: it loads
// vocabularies (a vocab.json and merges.txt pair, a tokenizer bundle, the
// embedded GPT-2 pair), pre-tokenizes text and encodes, counts and decodes
// it, and learns merges and writes vocabularies.
package bpe
