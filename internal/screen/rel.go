package screen

import (
	"os"
	"path/filepath"
	"strings"
)

// Base returns the folder that the sources walked from args are shown
// relative to: the folder an argument names, or the folder holding a file
// or the fixed part of a pattern, and for several arguments the deepest
// folder that holds them all. It returns "" when there is no such folder
// to strip ("." or standard input alone, or arguments with nothing in
// common).
func Base(args []string) string {
	var base []string
	first := true
	for _, a := range args {
		if a == "-" {
			continue
		}
		dir := argDir(a)
		parts := strings.Split(dir, string(filepath.Separator))
		if first {
			base, first = parts, false
			continue
		}
		n := 0
		for n < len(base) && n < len(parts) && base[n] == parts[n] {
			n++
		}
		base = base[:n]
	}
	b := strings.Join(base, string(filepath.Separator))
	if b == "." || b == "" && len(base) == 0 {
		return ""
	}
	if b == "" {
		return string(filepath.Separator) // "/a" and "/b" share the root
	}
	return b
}

// argDir returns the folder an argument stands for.
func argDir(a string) string {
	if i := strings.IndexAny(a, "*?["); i >= 0 {
		// The folder part before the first wildcard.
		a = a[:i]
		if j := strings.LastIndexByte(a, filepath.Separator); j >= 0 {
			a = a[:j+1]
		} else {
			a = "."
		}
		return filepath.Clean(a)
	}
	a = filepath.Clean(a)
	if isDir(a) {
		return a
	}
	return filepath.Dir(a)
}

// isDir reports whether p names a folder; a variable so that tests need
// no files.
var isDir = func(p string) bool {
	fi, err := os.Stat(p)
	return err == nil && fi.IsDir()
}

// Rel returns source as shown under base: without base and the separator
// after it, or unchanged when it is not inside base.
func Rel(source, base string) string {
	if base == "" {
		return source
	}
	if base == string(filepath.Separator) {
		return strings.TrimPrefix(source, base)
	}
	if rest, ok := strings.CutPrefix(source, base+string(filepath.Separator)); ok && rest != "" {
		return rest
	}
	return source
}
