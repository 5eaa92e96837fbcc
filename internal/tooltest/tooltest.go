// Package tooltest finds the outside programs that tests compare kinmap
// against. A test that needs one skips when it is missing, or fails when
// the environment variable KINMAP_REQUIRE_TOOLS is 1, as in CI.
package tooltest

import (
	"os"
	"os/exec"
	"strings"
	"testing"
)

// SystemPython is Debian's system Python, whose numpy and scikit-learn come
// from Debian packages; the python3 first on PATH may be another one.
const SystemPython = "/usr/bin/python3"

// Python returns SystemPython when it imports every module named, such as
// "numpy" or "sklearn"; otherwise it skips t, or fails it when
// KINMAP_REQUIRE_TOOLS=1.
func Python(t testing.TB, modules ...string) string {
	t.Helper()
	script := "import sys"
	if len(modules) > 0 {
		script = "import " + strings.Join(modules, ", ")
	}
	out, err := exec.Command(SystemPython, "-c", script).CombinedOutput()
	if err == nil {
		return SystemPython
	}
	what := SystemPython
	if len(modules) > 0 {
		what += " with " + strings.Join(modules, " and ")
	}
	if os.Getenv("KINMAP_REQUIRE_TOOLS") == "1" {
		t.Fatalf("%s is required (KINMAP_REQUIRE_TOOLS=1): %v %s", what, err, out)
	}
	t.Skipf("%s not available: %v %s", what, err, out)
	return ""
}
