package kinmap_test

import (
	"bytes"
	"math"
	"os"
	"path/filepath"
	"testing"

	"gonum.org/v1/gonum/mat"

	"github.com/kinmap/kinmap"
	"github.com/kinmap/kinmap/scenarios"
)

// A dump that lost the vibration channel is assigned by the features it
// has. Against the regimes of the same windows with every channel, the
// partial-distance placement (Samad and Harp 1992) must agree at least as
// often as filling the missing features with the fleet mean (zero after
// scaling), the placement before it, and at least 80 % of the time. Two
// draws of the fleet.
func TestAssignMissingChannel(t *testing.T) {
	for _, seed := range []uint64{1, 2} {
		if testing.Short() {
			t.Skip("end-to-end run")
		}
		spec, err := scenarios.DefaultSpec("pumping")
		if err != nil {
			t.Fatal(err)
		}
		spec.Sites, spec.Weeks, spec.Seed = 60, 2, int64(seed)
		fleet, err := scenarios.Generate(spec)
		if err != nil {
			t.Fatal(err)
		}
		dir := t.TempDir()
		full := filepath.Join(dir, "full.csv")
		writeDump(t, full, fleet, fleet.WindowStart(0), fleet.WindowStart(14), 0, 0.01, seed)
		b, err := os.ReadFile(full)
		if err != nil {
			t.Fatal(err)
		}
		var kept [][]byte
		for _, line := range bytes.SplitAfter(b, []byte("\n")) {
			if !bytes.Contains(line, []byte(",vibration,")) {
				kept = append(kept, line)
			}
		}
		lost := filepath.Join(dir, "lost.csv")
		if err := os.WriteFile(lost, bytes.Join(kept, nil), 0o644); err != nil {
			t.Fatal(err)
		}
		trained, err := kinmap.Train(options(full))
		if err != nil {
			t.Fatal(err)
		}
		m := trained.Model
		res, err := kinmap.Assign(options(lost), m)
		if err != nil {
			t.Fatalf("seed %d: assign without vibration: %v", seed, err)
		}
		if len(res.Table.Windows) != len(trained.Table.Windows) {
			t.Fatalf("seed %d: %d windows without vibration, %d with", seed, len(res.Table.Windows), len(trained.Table.Windows))
		}
		// The mean fill: every missing feature at zero.
		filled := mat.DenseCopyOf(res.X)
		filled.Apply(func(_, _ int, v float64) float64 {
			if math.IsNaN(v) {
				return 0
			}
			return v
		}, filled)
		fill := m.Map.Assign(filled, 0)
		var partialAgree, fillAgree int
		for i, w := range trained.Table.Windows {
			want := m.UnitRegime[w.Unit]
			if m.UnitRegime[res.Table.Windows[i].Unit] == want {
				partialAgree++
			}
			if m.UnitRegime[fill[i].BMU] == want {
				fillAgree++
			}
		}
		n := float64(len(trained.Table.Windows))
		p, f := float64(partialAgree)/n, float64(fillAgree)/n
		t.Logf("seed %d: %d windows; regime of the BMU agrees with all channels: partial distance %.3f, mean fill %.3f", seed, len(trained.Table.Windows), p, f)
		if p < f || p < 0.8 {
			t.Errorf("seed %d: partial distance agrees %.3f, mean fill %.3f; want at least the fill and 0.8", seed, p, f)
		}
	}
}
