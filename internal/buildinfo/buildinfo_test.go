package buildinfo

import (
	"runtime"
	"runtime/debug"
	"testing"
)

func TestFrom(t *testing.T) {
	// Setting keys as runtime/debug documents them for go build's VCS
	// stamping (vcs.revision, vcs.time, vcs.modified).
	bi := &debug.BuildInfo{GoVersion: "go1.26.8", Main: debug.Module{Path: "morsel", Version: "(devel)"}, Settings: []debug.BuildSetting{
		{Key: "GOOS", Value: "linux"}, {Key: "GOARCH", Value: "amd64"},
		{Key: "vcs.revision", Value: "30dd161a9b8c7d6e5f4a3b2c1d0e9f8a7b6c5d4e"},
		{Key: "vcs.time", Value: "2026-12-02T07:00:00Z"},
		{Key: "vcs.modified", Value: "true"},
	}}
	got := From(bi, "").String()
	want := "morsel devel (commit 30dd161a9b8c+dirty of 2026-12-02T07:00:00Z, built with go1.26.8 for linux/amd64)"
	if got != want {
		t.Errorf("got  %s\nwant %s", got, want)
	}
	bi.Main.Version = "v0.4.0"
	bi.Settings = nil
	if got, want := From(bi, "").String(), "morsel v0.4.0 (commit unknown, built with go1.26.8)"; got != want {
		t.Errorf("got  %s\nwant %s", got, want)
	}
	if got := From(bi, "v9.9.9").Version; got != "v9.9.9" {
		t.Errorf("a link-time version gives %q", got)
	}
}

func TestRead(t *testing.T) {
	if in := Read(); in.Go != runtime.Version() {
		t.Errorf("Read().Go = %q, want %q", in.Go, runtime.Version())
	}
}
