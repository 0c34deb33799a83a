// Package scripts holds the project's benchmark and check scripts; its one
// test runs the quick cases of hostile.sh.
package scripts

import (
	"bytes"
	"os/exec"
	"testing"
)

// TestHostileQuick runs the quick cases of hostile.sh (a fresh build,
// under time and memory limits): each must hold. The full table, with the
// large inputs, is `scripts/hostile.sh`.
func TestHostileQuick(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a build and 30-odd processes")
	}
	for _, tool := range []string{"bash", "go", "timeout", "mkfifo", "gzip"} {
		if _, err := exec.LookPath(tool); err != nil {
			t.Skipf("needs %s: %v", tool, err)
		}
	}
	out, err := exec.Command("bash", "hostile.sh", "--quick").CombinedOutput()
	if err != nil {
		t.Fatalf("hostile.sh --quick: %v\n%s", err, out)
	}
	lines := bytes.Split(bytes.TrimSpace(out), []byte("\n"))
	t.Log(string(lines[len(lines)-1]))
}
