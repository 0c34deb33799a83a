package corpus

import (
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path"
	"path/filepath"
	"strings"
	"syscall"

	"morsel/internal/textfile"
)

// List resolves paths into the files to read, in order: each argument in
// turn; a directory is walked recursively with entries in name order; an
// argument that does not exist but holds *, ? or [ is a glob ("**" matches
// any number of directories). "-" stands for standard input. Symbolic links
// are followed; a link back to a directory being walked is reported as
// "symlink-loop" and a file or directory reached twice as "duplicate". A
// missing or unreadable path gives a failed "unreadable" Skip. Include,
// Exclude and Hidden filter what is walked; filtered-out files are dropped
// without a Skip.
func List(paths []string, opt Options) ([]Input, []Skip) {
	var ins []Input
	var skips []Skip
	for _, e := range list(paths, opt) {
		if e.in != nil {
			ins = append(ins, *e.in)
		} else {
			skips = append(skips, *e.skip)
		}
	}
	return ins, skips
}

// entry is one result of a walk, in walk order.
type entry struct {
	in   *Input
	skip *Skip
}

type lister struct {
	opt  Options
	out  []entry
	seen map[string]string // real path -> path as walked
	only string            // a "**" glob the walked files must match
	// matched[i] is set once Include[i] has matched a file.
	matched []bool
	// settings are the Options.Settings that exist, with their file info.
	settings []setting
}

type setting struct {
	Setting
	fi fs.FileInfo
}

func list(paths []string, opt Options) []entry {
	l := &lister{opt: opt, seen: map[string]string{}, matched: make([]bool, len(opt.Include))}
	for _, s := range opt.Settings {
		// A setting that cannot be read is the command's error to report;
		// here it only cannot match.
		if fi, err := os.Stat(s.Path); err == nil {
			l.settings = append(l.settings, setting{s, fi})
		}
	}
	for _, p := range paths {
		l.arg(p)
	}
	for i, ok := range l.matched {
		if !ok && CheckPatterns(Options{Include: opt.Include[i : i+1]}) == nil {
			l.skip(opt.Include[i], ReasonNoMatch, "no file matches the include pattern", true)
		}
	}
	return l.out
}

// ErrBadPattern is wrapped by the error CheckPatterns returns.
var ErrBadPattern = path.ErrBadPattern

// CheckPatterns returns an error wrapping ErrBadPattern, naming the
// pattern, when an Include or Exclude pattern is malformed (such a pattern
// would match nothing). A caller checks this before listing, to report a
// usage error.
func CheckPatterns(opt Options) error {
	for _, set := range []struct {
		name     string
		patterns []string
	}{{"include", opt.Include}, {"exclude", opt.Exclude}} {
		for _, pat := range set.patterns {
			for _, part := range strings.Split(filepath.ToSlash(pat), "/") {
				if _, err := path.Match(part, ""); err != nil {
					return fmt.Errorf("%s pattern %q: %w", set.name, pat, err)
				}
			}
		}
	}
	return nil
}

func (l *lister) add(in Input) { l.out = append(l.out, entry{in: &in}) }

func (l *lister) skip(src, reason, detail string, failed bool) {
	l.out = append(l.out, entry{skip: &Skip{Source: src, Reason: reason, Detail: detail, Failed: failed}})
}

func (l *lister) fail(src string, err error) {
	if errors.Is(err, syscall.ELOOP) {
		l.skip(src, ReasonSymlinkLoop, err.Error(), true)
		return
	}
	l.skip(src, ReasonUnreadable, err.Error(), true)
}

func (l *lister) arg(p string) {
	if p == "-" {
		l.add(Input{Path: "-", Size: -1})
		return
	}
	lfi, err := os.Lstat(p)
	if err != nil {
		if errors.Is(err, fs.ErrNotExist) && strings.ContainsAny(p, "*?[") {
			l.glob(p)
			return
		}
		l.fail(p, err)
		return
	}
	real, err := filepath.EvalSymlinks(p)
	if err != nil {
		l.fail(p, err)
		return
	}
	if abs, err := filepath.Abs(real); err == nil {
		real = abs
	}
	l.visit(p, p, real, lfi, true, nil)
}

// glob expands a pattern that names no existing file.
func (l *lister) glob(p string) {
	if strings.Contains(p, "**") {
		parts := strings.Split(filepath.ToSlash(p), "/")
		i := 0
		for i < len(parts) && !strings.ContainsAny(parts[i], "*?[") {
			i++
		}
		root := strings.Join(parts[:i], "/")
		if root == "" {
			root = "."
			if strings.HasPrefix(p, "/") {
				root = "/"
			}
		}
		before := len(l.out)
		l.only = path.Clean(filepath.ToSlash(p))
		if l.only != p && strings.HasPrefix(filepath.ToSlash(p), "./") {
			l.only = strings.TrimPrefix(l.only, "./")
		}
		l.arg(filepath.FromSlash(root))
		l.only = ""
		if len(l.out) == before {
			l.skip(p, ReasonUnreadable, "no file matches the pattern", true)
		}
		return
	}
	matches, err := filepath.Glob(p)
	if err != nil {
		l.skip(p, ReasonUnreadable, "bad pattern: "+err.Error(), true)
		return
	}
	before := len(l.out)
	dotPattern := strings.HasPrefix(filepath.Base(p), ".")
	for _, m := range matches {
		if !l.opt.Hidden && !dotPattern && strings.HasPrefix(filepath.Base(m), ".") {
			continue
		}
		l.arg(m)
	}
	if len(l.out) == before {
		l.skip(p, ReasonUnreadable, "no file matches the pattern", true)
	}
}

// visit handles one path: p as walked, root the argument it came from, real
// its resolved absolute path, lfi its Lstat info, ancestors the real paths
// of the directories being walked above it.
func (l *lister) visit(p, root, real string, lfi fs.FileInfo, explicit bool, ancestors []string) {
	fi := lfi
	if lfi.Mode()&fs.ModeSymlink != 0 {
		var err error
		fi, err = os.Stat(p)
		if err != nil {
			if errors.Is(err, fs.ErrNotExist) {
				err = errors.New("dangling symbolic link: " + err.Error())
			}
			l.fail(p, err)
			return
		}
		r, err := filepath.EvalSymlinks(p)
		if err != nil {
			l.fail(p, err)
			return
		}
		if abs, err := filepath.Abs(r); err == nil {
			real = abs
		}
	}
	switch {
	case fi.IsDir():
		if !explicit && l.excluded(p, root) {
			return
		}
		for _, a := range ancestors {
			if a == real {
				l.skip(p, ReasonSymlinkLoop, "links back to "+a+", which is being walked", false)
				return
			}
		}
		if prev, ok := l.seen[real]; ok {
			l.skip(p, ReasonDuplicate, "same directory as "+prev, false)
			return
		}
		l.seen[real] = p
		entries, err := os.ReadDir(p)
		if err != nil {
			l.fail(p, err)
		}
		ancestors = append(ancestors, real)
		for _, e := range entries {
			name := e.Name()
			if !l.opt.Hidden && strings.HasPrefix(name, ".") {
				continue
			}
			child := filepath.Join(p, name)
			info, err := e.Info()
			if err != nil {
				l.fail(child, err)
				continue
			}
			l.visit(child, root, filepath.Join(real, name), info, false, ancestors)
		}
	case fi.Mode().IsRegular():
		if !l.wanted(p, root) {
			return
		}
		for _, s := range l.settings {
			if os.SameFile(fi, s.fi) {
				l.skip(p, ReasonSetting, "read by this run as the "+s.What+", not a document", false)
				return
			}
		}
		if prev, ok := l.seen[real]; ok {
			l.skip(p, ReasonDuplicate, "same file as "+prev, false)
			return
		}
		l.seen[real] = p
		if l.written(fi) {
			l.skip(p, ReasonOutput, "the file this run writes, never read", false)
			return
		}
		l.add(Input{Path: p, Size: fi.Size(), Named: explicit})
	default:
		if !l.wanted(p, root) {
			return
		}
		// A named pipe or device may never end or never deliver a byte;
		// only regular files and standard input ("-") are read. A path the
		// user named is a failure, one met in a walk a deliberate skip.
		detail := "not a regular file (" + specialKind(fi.Mode()) + ")"
		if explicit {
			detail += "; pass its contents on standard input as -"
		}
		l.skip(p, ReasonSpecial, detail, explicit)
	}
}

// written reports whether fi is one of the files the run writes.
func (l *lister) written(fi fs.FileInfo) bool {
	for _, w := range l.opt.Written {
		if os.SameFile(fi, w) {
			return true
		}
	}
	return false
}

// candidates returns the names a filter pattern is tried against.
func candidates(p, root string) []string {
	s := filepath.ToSlash(p)
	c := []string{path.Base(s), s}
	if rel, err := filepath.Rel(root, p); err == nil && rel != "." && !strings.HasPrefix(rel, "..") {
		c = append(c, filepath.ToSlash(rel))
	}
	return c
}

func (l *lister) excluded(p, root string) bool {
	return matchAny(l.opt.Exclude, candidates(p, root))
}

func (l *lister) wanted(p, root string) bool {
	c := candidates(p, root)
	if l.only != "" && !matchGlob(l.only, path.Clean(filepath.ToSlash(p))) {
		return false
	}
	if len(l.opt.Include) > 0 {
		hit := false
		for i, pat := range l.opt.Include {
			if matchAny([]string{pat}, c) {
				l.matched[i], hit = true, true
			}
		}
		if !hit {
			return false
		}
	}
	return !matchAny(l.opt.Exclude, c)
}

func matchAny(patterns, names []string) bool {
	for _, pat := range patterns {
		pat = filepath.ToSlash(pat)
		for _, n := range names {
			if matchGlob(pat, n) {
				return true
			}
		}
	}
	return false
}

// matchGlob reports whether name matches pattern, both slash-separated,
// where a "**" part matches zero or more parts and other parts follow
// path.Match. A malformed pattern matches nothing.
func matchGlob(pattern, name string) bool {
	return matchParts(strings.Split(pattern, "/"), strings.Split(name, "/"))
}

func matchParts(pat, name []string) bool {
	for len(pat) > 0 {
		if pat[0] == "**" {
			for len(pat) > 0 && pat[0] == "**" {
				pat = pat[1:]
			}
			if len(pat) == 0 {
				return true
			}
			for i := 0; i <= len(name); i++ {
				if matchParts(pat, name[i:]) {
					return true
				}
			}
			return false
		}
		if len(name) == 0 {
			return false
		}
		ok, err := path.Match(pat[0], name[0])
		if err != nil || !ok {
			return false
		}
		pat, name = pat[1:], name[1:]
	}
	return len(name) == 0
}

// specialKind names the kind of a file that is not regular.
func specialKind(m fs.FileMode) string { return textfile.KindOf(m) }
