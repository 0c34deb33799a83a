package partial

import (
	"crypto/sha256"
	"encoding/hex"
	"strconv"
)

// InputsPrint is a header's Inputs: the fingerprint of the arguments a
// walk was given, in order (each path and a zero byte, SHA-256).
func InputsPrint(paths []string) string {
	h := sha256.New()
	for _, p := range paths {
		h.Write([]byte(p))
		h.Write([]byte{0})
	}
	return "sha256:" + hex.EncodeToString(h.Sum(nil))
}

// VocabPrint is how a vocabulary appears in a header's Agree: its
// fingerprint (bpe.Vocab.Fingerprint) and the context window it gives,
// which fit and ration take by default.
func VocabPrint(fingerprint string, window int) string {
	return fingerprint + "/window=" + strconv.Itoa(window)
}
