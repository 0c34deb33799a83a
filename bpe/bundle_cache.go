package bpe

// loadBundleCached parses a bundle read from path.
func loadBundleCached(path string, data []byte, cfgPath string, cfg []byte) (*Vocab, error) {
	return ParseBundle(path, data, cfgPath, cfg)
}
