// Package beamtest holds what the tests of the Beam module share.
package beamtest

import (
	"os"
	"path/filepath"
	"testing"

	"github.com/apache/beam/sdks/v2/go/pkg/beam/testing/ptest"

	"github.com/kinmap/kinmap/scenarios"
)

// Main initialises Beam and runs the tests of a package (Prism by default,
// Beam's --runner otherwise) with a temporary folder of their own, removed
// at the end: Beam's universal runner leaves an empty placeholder file in
// the temporary folder for every loopback pipeline run. It returns the exit
// status.
func Main(m *testing.M) int {
	tmp, err := os.MkdirTemp("", "kinmap-beam-test-")
	if err != nil {
		panic(err)
	}
	defer os.RemoveAll(tmp)
	os.Setenv("TMPDIR", tmp)
	return ptest.MainRet(m)
}

// Fleet writes the generated fleet of a scenario, of the given size, into a
// temporary folder of t and returns its long Parquet dump and its register.
func Fleet(t testing.TB, name string, sites, weeks int) (dump, register string) {
	t.Helper()
	spec, err := scenarios.DefaultSpec(name)
	if err != nil {
		t.Fatal(err)
	}
	spec.Sites, spec.Weeks = sites, weeks
	fleet, err := scenarios.Generate(spec)
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	if _, err := fleet.Write(dir); err != nil {
		t.Fatal(err)
	}
	return filepath.Join(dir, scenarios.FileLongParquet), filepath.Join(dir, scenarios.FileSites)
}
