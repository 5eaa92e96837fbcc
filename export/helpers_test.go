package export

import (
	"os"
	"os/exec"
	"path/filepath"
	"sync"
	"testing"
)

// tool finds an outside program, skipping the test when it is missing
// unless KINMAP_REQUIRE_TOOLS=1.
func tool(t *testing.T, name string) string {
	t.Helper()
	p, err := exec.LookPath(name)
	if err != nil {
		if os.Getenv("KINMAP_REQUIRE_TOOLS") == "1" {
			t.Fatalf("%s is required (KINMAP_REQUIRE_TOOLS=1) but missing: %v", name, err)
		}
		t.Skipf("%s not found: %v", name, err)
	}
	return p
}

// shared holds the fixture run written once, for the tests that only read
// it; drawing the pictures is the slow part of Write.
var shared struct {
	once sync.Once
	dir  string
	err  error
}

func TestMain(m *testing.M) {
	code := m.Run()
	if shared.dir != "" {
		os.RemoveAll(shared.dir)
	}
	os.Exit(code)
}

// written returns a folder holding the fixture run's outputs. Tests must
// not change it.
func written(t *testing.T) string {
	t.Helper()
	shared.once.Do(func() {
		if shared.dir, shared.err = os.MkdirTemp("", "kinmap-export-"); shared.err == nil {
			shared.err = Write(shared.dir, fixtureRun())
		}
	})
	if shared.err != nil {
		t.Fatal(shared.err)
	}
	return shared.dir
}

func read(t *testing.T, dir, name string) []byte {
	t.Helper()
	b, err := os.ReadFile(filepath.Join(dir, name))
	if err != nil {
		t.Fatal(err)
	}
	return b
}
