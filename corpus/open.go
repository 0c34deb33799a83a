package corpus

import (
	"errors"
	"fmt"
	"os"
	"syscall"
)

// errSpecial marks a path that is not a regular file, or is one of a kernel
// file system, and so is not read.
var errSpecial = errors.New("not a regular file")

// openRegular opens path for reading without blocking and returns it only
// when it is a regular file outside the kernel's file systems. Opening
// without blocking means a named pipe put in place of a listed file cannot
// stall the open, and a kernel file that waits for data (/proc/kmsg) fails
// its read instead of waiting forever; the file's own type is checked after
// opening, since the path may have changed since it was listed.
func openRegular(path string) (*os.File, error) {
	f, err := os.OpenFile(path, os.O_RDONLY|syscall.O_NONBLOCK, 0)
	if err != nil {
		return nil, err
	}
	fi, err := f.Stat()
	if err != nil {
		f.Close()
		return nil, err
	}
	if !fi.Mode().IsRegular() {
		f.Close()
		return nil, fmt.Errorf("%w (%s)", errSpecial, specialKind(fi.Mode()))
	}
	if fs := kernelFS(f); fs != "" {
		f.Close()
		return nil, fmt.Errorf("%w: a file of the kernel's %s file system", errSpecial, fs)
	}
	return f, nil
}
