// Package buildinfo says which build of morsel is running: its version,
// the commit it was built from and the Go release that built it.
package buildinfo

import (
	"fmt"
	"runtime/debug"
)

// Version is the release, set at link time with
// -ldflags "-X morsel/internal/buildinfo.Version=v1.2.3"; empty means the
// module version that the go command recorded, if any.
var Version string

// Commit is the commit, set at link time with
// -ldflags "-X morsel/internal/buildinfo.Commit=$(git rev-parse --short=12 HEAD)"
// where the go command does not stamp it (-buildvcs=false); empty means
// the one the go command recorded, if any.
var Commit string

// Info is what a build records about itself.
type Info struct {
	Version  string // "v1.2.3", or "devel" for a build from a working tree
	Commit   string // the first 12 hex digits of the commit, "+dirty" when the tree had changes, or "unknown"
	Time     string // the commit's time (RFC 3339), or ""
	Go       string // the Go release, "go1.26.8"
	Platform string // "linux/amd64"
}

// Read returns the running program's Info.
func Read() Info {
	bi, ok := debug.ReadBuildInfo()
	if !ok {
		return Info{Version: orDevel(Version, ""), Commit: orUnknown(Commit)}
	}
	in := From(bi, Version)
	if Commit != "" {
		in.Commit = Commit
	}
	return in
}

// From returns the Info that bi records, with version (if not empty) in
// place of the module version.
func From(bi *debug.BuildInfo, version string) Info {
	in := Info{Version: orDevel(version, bi.Main.Version), Commit: "unknown", Go: bi.GoVersion}
	var osName, arch, dirty string
	for _, s := range bi.Settings {
		switch s.Key {
		case "vcs.revision":
			in.Commit = s.Value
			if len(in.Commit) > 12 {
				in.Commit = in.Commit[:12]
			}
		case "vcs.time":
			in.Time = s.Value
		case "vcs.modified":
			if s.Value == "true" {
				dirty = "+dirty"
			}
		case "GOOS":
			osName = s.Value
		case "GOARCH":
			arch = s.Value
		}
	}
	if in.Commit != "unknown" {
		in.Commit += dirty
	}
	if osName != "" {
		in.Platform = osName + "/" + arch
	}
	return in
}

func orUnknown(s string) string {
	if s == "" {
		return "unknown"
	}
	return s
}

func orDevel(set, module string) string {
	switch {
	case set != "":
		return set
	case module != "" && module != "(devel)":
		return module
	}
	return "devel"
}

// String returns the one line that morsel --version prints.
func (in Info) String() string {
	s := fmt.Sprintf("morsel %s (commit %s", in.Version, in.Commit)
	if in.Time != "" {
		s += " of " + in.Time
	}
	s += ", built with " + in.Go
	if in.Platform != "" {
		s += " for " + in.Platform
	}
	return s + ")"
}
