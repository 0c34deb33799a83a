package main

import (
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"
)

// Settings files must be regular files of at most 16 MiB: a device, a
// named pipe or a huge file is refused at once, naming the file (exit
// status 2), instead of being read without end.
func TestSettingsFilesBounded(t *testing.T) {
	dir := t.TempDir()
	fifo := filepath.Join(dir, "frame.fifo")
	if err := syscall.Mkfifo(fifo, 0o644); err != nil {
		t.Skip("no named pipes:", err)
	}
	big := filepath.Join(dir, "big-frame.txt")
	if err := os.WriteFile(big, []byte("{{document}}\n"+strings.Repeat("x", maxSettingFile)), 0o644); err != nil {
		t.Fatal(err)
	}
	targets := filepath.Join(dir, "t.toml")
	if err := os.WriteFile(targets, []byte("[target.a]\nwindow = 100\nframe = \"/dev/zero\"\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	nul := filepath.Join(dir, "nul-frame.txt")
	if err := os.WriteFile(nul, []byte("{{document}}\x00"), 0o644); err != nil {
		t.Fatal(err)
	}
	docs := "../../testdata/demo/docs"
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{"fit", docs, "--frame", "/dev/zero"}, "/dev/zero: not a regular file (a character device)"},
		{[]string{"fit", docs, "--frame", fifo}, "frame.fifo: not a regular file (a named pipe)"},
		{[]string{"fit", docs, "--frame", dir}, "not a regular file (a directory)"},
		{[]string{"fit", docs, "--frame", big}, "big-frame.txt: too large"},
		{[]string{"fit", docs, "--frame", nul}, "nul-frame.txt:1: a NUL byte"},
		{[]string{"quote", docs, "--targets", "/dev/zero"}, "/dev/zero: not a regular file"},
		{[]string{"quote", docs, "--targets", fifo}, "not a regular file (a named pipe)"},
		{[]string{"fit", docs, "--targets", targets, "--target", "a"}, "frame /dev/zero: not a regular file"},
		{[]string{"fragments", docs, "--terms", "/dev/zero"}, "/dev/zero: not a regular file"},
		{[]string{"pieces", "--file", "/dev/zero"}, "/dev/zero: not a regular file"},
		{[]string{"pieces", "--file", fifo}, "not a regular file (a named pipe)"},
	} {
		done := make(chan struct{})
		var serr string
		var code int
		go func() {
			_, serr, code = run(t, "", append(c.args, "--quiet")...)
			close(done)
		}()
		select {
		case <-done:
		case <-time.After(20 * time.Second):
			t.Fatalf("%v: still running after 20 s", c.args)
		}
		if code != exitUsage || !strings.Contains(serr, c.want) {
			t.Errorf("%v: exit %d, want %d with %q:\n%s", c.args, code, exitUsage, c.want, serr)
		}
	}
}

func TestMinorUsageErrors(t *testing.T) {
	docs := "../../testdata/demo/docs"
	for _, args := range [][]string{
		{"survey", docs, "--as", "bogus"},
		{"fragments", docs, "--min-pieces", "NaN"},
		{"fragments", docs, "--min-pieces", "+Inf"},
		{"learn", docs, "--add", "5", "--out", t.TempDir(), "--holdout", "NaN"},
	} {
		if _, serr, code := run(t, "", append(args, "--quiet")...); code != exitUsage {
			t.Errorf("%v: exit %d, want %d: %s", args, code, exitUsage, serr)
		}
	}
}

// Counts past the bound are refused at parse time, before any sum can
// overflow (each once gave a negative count or cost, or a wrong verdict).
func TestTokenFlagsBounded(t *testing.T) {
	docs := "../../testdata/demo/docs"
	for _, args := range [][]string{
		{"fit", docs, "--overhead", "9223372036854775807"},
		{"fit", docs, "--reserve", "9223372036854775807"},
		{"fit", docs, "--window", "2147483648"},
		{"quote", docs, "--targets", demoTargets, "--answer-tokens", "4611686018427387904"},
		{"ration", docs, "--overlap", "4611686018427387904"},
		{"ration", docs, "--budget", "9223372036854775807"},
	} {
		_, serr, code := run(t, "", append(args, "--quiet")...)
		if code != exitUsage || !strings.Contains(serr, "give at most 2147483647") {
			t.Errorf("%v: exit %d, want %d naming the bound: %s", args, code, exitUsage, serr)
		}
	}
	// At the bound, the sums hold: the margin is negative and exact.
	out, serr, code := run(t, "", "fit", docs, "--reserve", "2147483000", "--overhead", "2147483647", "--window", "2147483647", "--format", "json", "--quiet")
	if code != exitCheck || !strings.Contains(out, `"fits": false`) || strings.Contains(out, `"fits": true`) || !strings.Contains(out, `"margin": -2147483`) {
		t.Fatalf("overhead + reserve past the window: exit %d, want every document over by about 2^31: %s", code, serr)
	}
}
