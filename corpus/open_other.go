//go:build !linux

package corpus

import "os"

// kernelFS returns "": only Linux's kernel file systems are recognised.
func kernelFS(f *os.File) string { return "" }
