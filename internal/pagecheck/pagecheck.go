// Package pagecheck renders an HTML page in headless Chromium and lists
// the places where text does not stay in its box: content wider than its
// element, figures, names or code wrapped onto a second line, chart labels
// that overlap or leave their chart, and repeated headings.
package pagecheck

import (
	"bytes"
	"context"
	_ "embed"
	"errors"
	"fmt"
	"html"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
)

//go:embed check.js
var checkJS []byte

// ErrNoBrowser is returned when no Chromium is installed.
var ErrNoBrowser = errors.New("chromium not found (Debian: apt-get install chromium)")

// Browser returns the path of the Chromium binary, or ErrNoBrowser.
func Browser() (string, error) {
	for _, name := range []string{"chromium", "chromium-browser"} {
		if p, err := exec.LookPath(name); err == nil {
			return p, nil
		}
	}
	return "", ErrNoBrowser
}

// Check renders page at width CSS pixels and returns the problems found,
// one line each; none is a page whose text all stays in its boxes. It
// fails when the browser cannot be run or the check did not run.
func Check(ctx context.Context, page []byte, width int) ([]string, error) {
	browser, err := Browser()
	if err != nil {
		return nil, err
	}
	dir, err := os.MkdirTemp("", "pagecheck")
	if err != nil {
		return nil, err
	}
	defer os.RemoveAll(dir)
	js := filepath.Join(dir, "check.js")
	if err := os.WriteFile(js, checkJS, 0o644); err != nil {
		return nil, err
	}
	// The check runs last in the body, on the laid-out page. A page of
	// ours runs no script of its own, so this is the only one.
	tag := []byte(`<script src="file://` + js + `"></script></body>`)
	i := bytes.LastIndex(page, []byte("</body>"))
	if i < 0 {
		return nil, errors.New("the page has no </body>")
	}
	withJS := append(append(append([]byte(nil), page[:i]...), tag...), page[i+len("</body>"):]...)
	file := filepath.Join(dir, "page.html")
	if err := os.WriteFile(file, withJS, 0o644); err != nil {
		return nil, err
	}
	cmd := exec.CommandContext(ctx, browser, "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic",
		"--no-first-run", "--disable-background-networking", "--disable-component-update", "--disable-sync",
		"--hide-scrollbars", "--user-data-dir="+filepath.Join(dir, "profile"),
		fmt.Sprintf("--window-size=%d,1600", width), "--dump-dom", "file://"+file)
	var out, stderr bytes.Buffer
	cmd.Stdout, cmd.Stderr = &out, &stderr
	if err := cmd.Run(); err != nil {
		return nil, fmt.Errorf("chromium: %w: %s", err, lastLine(stderr.String()))
	}
	const open, end = `<pre id="check-html">`, `</pre>`
	dom := out.String()
	a := strings.Index(dom, open)
	if a < 0 {
		return nil, errors.New("the check did not run in the page")
	}
	rest := dom[a+len(open):]
	b := strings.Index(rest, end)
	if b < 0 {
		return nil, errors.New("the check's report is cut short")
	}
	lines := strings.Split(html.UnescapeString(rest[:b]), "\n")
	var problems []string
	for _, l := range lines[1:] { // the first line is the count
		if strings.TrimSpace(l) != "" {
			problems = append(problems, l)
		}
	}
	return problems, nil
}

func lastLine(s string) string {
	s = strings.TrimSpace(s)
	if i := strings.LastIndexByte(s, '\n'); i >= 0 {
		return s[i+1:]
	}
	return s
}
