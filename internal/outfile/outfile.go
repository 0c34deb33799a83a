// Package outfile writes the files a command produces (a chunk plan, a
// learned vocabulary) so that no run can lose data: an output that is also
// one of the run's inputs is refused, an existing file is replaced only when
// the caller allows it, and the text goes to a temporary file beside the
// target that is renamed over it only once everything is written, so that a
// run that fails or is killed leaves the old file as it was.
package outfile

import (
	"errors"
	"fmt"
	"io/fs"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"sync"
)

// ErrExists is wrapped by the error Create returns for an existing file
// that Options.Force does not allow to be replaced.
var ErrExists = errors.New("already exists")

// ErrIsInput is wrapped by the error Create returns when the target is one
// of Options.Inputs (the same file, by device and inode: through a symbolic
// or hard link too).
var ErrIsInput = errors.New("is also an input")

// ErrNotFile is wrapped by the error Create returns when the target is a
// directory or a dangling symbolic link.
var ErrNotFile = errors.New("not a file")

// Options says what Create may do.
type Options struct {
	// Force allows an existing regular file to be replaced.
	Force bool
	// Inputs are the paths the run reads, as given on its command line;
	// "-" stands for Stdin. A directory is not searched: the caller keeps
	// the walk off the files that Written returns.
	Inputs []string
	// Stdin is what "-" reads, when it is a file; nil otherwise.
	Stdin *os.File
}

// File is an output being written. Write to it, then Commit to put it in
// place, or Abort to drop it; both may be called after the other, and
// more than once.
type File struct {
	path    string // the target, symbolic links resolved
	tmp     string // the temporary file beside it; "" when written in place
	f       *os.File
	written []fs.FileInfo
	done    bool
}

// Create starts writing the file at path. A path on /dev or /proc, or an
// existing file that is not a regular file (a terminal, a named pipe), is
// written in place: there is nothing there to lose. Any other path is
// written through a temporary file in the same directory. Create fails
// wrapping ErrIsInput, ErrExists or ErrNotFile, or with the error that
// kept it from creating the file.
func Create(path string, opt Options) (*File, error) {
	if isSystemPath(path) {
		return openInPlace(path)
	}
	target := path
	lfi, err := os.Lstat(path)
	switch {
	case errors.Is(err, fs.ErrNotExist):
		lfi = nil
	case err != nil:
		return nil, err
	case lfi.Mode()&fs.ModeSymlink != 0:
		// Replace the file the link names, so that the link stays.
		if target, err = filepath.EvalSymlinks(path); err != nil {
			return nil, fmt.Errorf("%s: %w: a symbolic link to nothing (%v)", path, ErrNotFile, err)
		}
		if lfi, err = os.Stat(target); err != nil {
			return nil, err
		}
	}
	var written []fs.FileInfo
	if lfi != nil {
		switch {
		case lfi.IsDir():
			return nil, fmt.Errorf("%s: %w: it is a directory", path, ErrNotFile)
		case !lfi.Mode().IsRegular():
			return openInPlace(path)
		}
		if in := inputAt(lfi, opt); in != "" {
			return nil, fmt.Errorf("%s %w (%s): it would be overwritten while it is read", path, ErrIsInput, in)
		}
		if !opt.Force {
			return nil, fmt.Errorf("%s %w: give --force to replace it", path, ErrExists)
		}
		written = append(written, lfi)
	}
	f, tmp, err := createBeside(target)
	if err != nil {
		return nil, err
	}
	if lfi != nil {
		// The replacement keeps the old file's permissions.
		if err := f.Chmod(lfi.Mode().Perm()); err != nil {
			f.Close()
			os.Remove(tmp)
			return nil, err
		}
	}
	fi, err := f.Stat()
	if err != nil {
		f.Close()
		os.Remove(tmp)
		return nil, err
	}
	written = append(written, fi)
	track(tmp)
	return &File{path: target, tmp: tmp, f: f, written: written}, nil
}

// openInPlace opens an existing device, pipe or system path for writing.
func openInPlace(path string) (*File, error) {
	f, err := os.OpenFile(path, os.O_WRONLY|os.O_APPEND, 0)
	if err != nil {
		return nil, err
	}
	return &File{path: path, f: f}, nil
}

// isSystemPath reports whether path names a file of /dev or /proc, such as
// /dev/stdout, which is written where it is.
func isSystemPath(path string) bool {
	abs, err := filepath.Abs(path)
	if err != nil {
		return false
	}
	return strings.HasPrefix(abs, "/dev/") || strings.HasPrefix(abs, "/proc/")
}

// inputAt returns the input (as given) that is the file fi, or "".
func inputAt(fi fs.FileInfo, opt Options) string {
	for _, in := range opt.Inputs {
		var ifi fs.FileInfo
		var err error
		if in == "-" {
			if opt.Stdin == nil {
				continue
			}
			ifi, err = opt.Stdin.Stat()
			in = "standard input"
		} else {
			ifi, err = os.Stat(in)
		}
		if err == nil && os.SameFile(fi, ifi) {
			return in
		}
	}
	return ""
}

// createBeside creates a new, empty temporary file in target's directory,
// with the permissions a new file gets there (0666 less the umask).
func createBeside(target string) (*os.File, string, error) {
	dir, base := filepath.Split(target)
	for range 100 {
		tmp := filepath.Join(dir, fmt.Sprintf(".%s.%d-%08x.tmp", base, os.Getpid(), rand.Uint32()))
		f, err := os.OpenFile(tmp, os.O_WRONLY|os.O_CREATE|os.O_EXCL, 0o666)
		if errors.Is(err, fs.ErrExist) {
			continue
		}
		return f, tmp, err
	}
	return nil, "", fmt.Errorf("%s: no free temporary name beside it", target)
}

// Name returns the path the file ends up at.
func (o *File) Name() string { return o.path }

// Written returns the files a walk must not read while this one is
// written: the temporary file and the file it replaces, if any.
func (o *File) Written() []fs.FileInfo { return o.written }

// Write writes p to the file.
func (o *File) Write(p []byte) (int, error) { return o.f.Write(p) }

// Commit makes the written text durable and puts it in place of the old
// file. On any error the old file stays as it was and the temporary file
// is removed.
func (o *File) Commit() error {
	if o.done {
		return nil
	}
	o.done = true
	if o.tmp == "" {
		return o.f.Close()
	}
	defer untrack(o.tmp)
	err := o.f.Sync()
	if cerr := o.f.Close(); err == nil {
		err = cerr
	}
	if err == nil {
		err = os.Rename(o.tmp, o.path)
	}
	if err != nil {
		os.Remove(o.tmp)
		return fmt.Errorf("%s: %w", o.path, err)
	}
	return nil
}

// Abort drops what was written; an existing file stays as it was.
func (o *File) Abort() {
	if o.done {
		return
	}
	o.done = true
	o.f.Close()
	if o.tmp != "" {
		os.Remove(o.tmp)
		untrack(o.tmp)
	}
}

// pending holds the temporary files not yet committed or aborted, for
// RemovePending.
var pending struct {
	sync.Mutex
	names map[string]bool
}

func track(tmp string) {
	pending.Lock()
	defer pending.Unlock()
	if pending.names == nil {
		pending.names = map[string]bool{}
	}
	pending.names[tmp] = true
}

func untrack(tmp string) {
	pending.Lock()
	defer pending.Unlock()
	delete(pending.names, tmp)
}

// RemovePending removes every temporary file not yet committed or
// aborted: a process stopped by a signal calls it on its way out, so that
// it leaves no half-written file behind.
func RemovePending() {
	pending.Lock()
	defer pending.Unlock()
	for tmp := range pending.names {
		os.Remove(tmp)
	}
	pending.names = nil
}

// Scratch creates an unnamed scratch file for text that will be copied
// into the output at target later: beside target (os.TempDir for a system
// path), removed from its directory at once where the system allows, so
// that nothing lists it and it goes when it is closed. Close removes it
// where it could not be removed at once.
func Scratch(target string) (*ScratchFile, error) {
	dir := os.TempDir()
	if !isSystemPath(target) {
		dir = filepath.Dir(target)
	}
	f, err := os.CreateTemp(dir, ".morsel-scratch-*")
	if err != nil {
		return nil, err
	}
	s := &ScratchFile{File: f}
	if os.Remove(f.Name()) != nil {
		s.name = f.Name()
		track(s.name)
	}
	return s, nil
}

// A ScratchFile is a file made by Scratch.
type ScratchFile struct {
	*os.File
	name string // the path still to remove on Close; "" when removed
}

// Close closes the file and removes it.
func (s *ScratchFile) Close() error {
	err := s.File.Close()
	if s.name != "" {
		os.Remove(s.name)
		untrack(s.name)
		s.name = ""
	}
	return err
}
