// Package tooltest finds the outside programs that tests check kinmap
// against.
package tooltest

import (
	"os"
	"os/exec"
	"testing"
)

// Numpy returns Debian's system python, /usr/bin/python3, when it imports
// numpy (not the pyenv python that may come first on PATH). It skips the
// test otherwise, or fails it when KINMAP_REQUIRE_TOOLS=1.
func Numpy(t testing.TB) string {
	t.Helper()
	const py = "/usr/bin/python3"
	err := exec.Command(py, "-c", "import numpy").Run()
	if err == nil {
		return py
	}
	if os.Getenv("KINMAP_REQUIRE_TOOLS") == "1" {
		t.Fatalf("%s with numpy is required (KINMAP_REQUIRE_TOOLS=1): %v", py, err)
	}
	t.Skipf("%s with numpy not available: %v", py, err)
	return ""
}
