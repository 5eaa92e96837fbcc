package kinmap_test

import (
	"path/filepath"
	"testing"

	"github.com/kinmap/kinmap"
	"github.com/kinmap/kinmap/scenarios"
)

// BenchmarkDemoRun measures a default run (kinmap.Train: reading the dump,
// features, the map, the regimes and the timelines; no outputs written) on
// the demo fleet, the pumping-station scenario at its default size. It
// uses only what every version of the API has had, so that the same file
// measures an earlier tree as the baseline (BENCHMARKS.md).
func BenchmarkDemoRun(b *testing.B) {
	spec, err := scenarios.DefaultSpec("pumping")
	if err != nil {
		b.Fatal(err)
	}
	fleet, err := scenarios.Generate(spec)
	if err != nil {
		b.Fatal(err)
	}
	dir := b.TempDir()
	if _, err := fleet.Write(dir, scenarios.FileSites, scenarios.FileLongParquet); err != nil {
		b.Fatal(err)
	}
	o := kinmap.DefaultOptions()
	o.Data = []string{filepath.Join(dir, scenarios.FileLongParquet)}
	o.Sites = filepath.Join(dir, scenarios.FileSites)
	var regimes int
	for b.Loop() {
		res, err := kinmap.Train(o)
		if err != nil {
			b.Fatal(err)
		}
		regimes = len(res.Model.Regimes)
	}
	b.ReportMetric(b.Elapsed().Seconds()/float64(b.N), "s/run")
	b.ReportMetric(float64(regimes), "regimes")
}
