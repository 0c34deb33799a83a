package textfile

import (
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"syscall"
)

// ErrNotRegular is wrapped by the error ReadSmall returns for a path that
// is not a regular file (a named pipe, a device, a directory).
var ErrNotRegular = errors.New("not a regular file")

// ErrTooLarge is wrapped by the error ReadSmall returns for a file over
// its limit.
var ErrTooLarge = errors.New("too large")

// ReadSmall reads the whole of the regular file at path when it holds at
// most max bytes. It opens the file without blocking and checks what it
// opened, so that a named pipe or a device (/dev/zero, say) named as a
// settings file is refused at once rather than read for ever, and it
// stops reading past max should the file grow meanwhile. Its errors name
// path.
func ReadSmall(path string, max int64) ([]byte, error) {
	f, err := os.OpenFile(path, os.O_RDONLY|syscall.O_NONBLOCK, 0)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	fi, err := f.Stat()
	if err != nil {
		return nil, err
	}
	if !fi.Mode().IsRegular() {
		return nil, fmt.Errorf("%s: %w (%s)", path, ErrNotRegular, KindOf(fi.Mode()))
	}
	if fi.Size() > max {
		return nil, fmt.Errorf("%s: %w: %d bytes, more than the %d this file may hold", path, ErrTooLarge, fi.Size(), max)
	}
	data, err := io.ReadAll(io.LimitReader(f, max+1))
	if err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	if int64(len(data)) > max {
		return nil, fmt.Errorf("%s: %w: more than the %d bytes this file may hold", path, ErrTooLarge, max)
	}
	return data, nil
}

// KindOf names the kind of a file that is not regular: "a named pipe", "a
// character device".
func KindOf(m fs.FileMode) string {
	switch {
	case m.IsDir():
		return "a directory"
	case m&fs.ModeNamedPipe != 0:
		return "a named pipe"
	case m&fs.ModeSocket != 0:
		return "a socket"
	case m&fs.ModeCharDevice != 0:
		return "a character device"
	case m&fs.ModeDevice != 0:
		return "a block device"
	}
	return "an irregular file"
}
