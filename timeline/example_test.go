package timeline_test

import (
	"fmt"
	"log"
	"math"
	"time"

	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/lattice"
	"github.com/kinmap/kinmap/mapper"
	"github.com/kinmap/kinmap/model"
	"github.com/kinmap/kinmap/timeline"
)

func ExampleBuild() {
	// Two regimes on a map of two units, one scaled feature. The training
	// windows' quantization errors run from 0 to 0.5 (median 0.25), so the
	// automatic switch cost is 0.5.
	m := &model.Model{
		Map: mapper.Map{Lattice: lattice.Lattice{Cols: 2, Rows: 1, Flat: true}, Dim: 1, Codebook: []float64{-1, 1}},
		Regimes: []mapper.Regime{
			{ID: 1, Units: []int{0}, Centroid: []float64{-1}},
			{ID: 2, Units: []int{1}, Centroid: []float64{1}},
		},
		UnitRegime:  []int{1, 2},
		QEQuantiles: []float64{0, 0.25, 0.5},
	}
	// One site for seven days: a one-day blip on day 2, a lasting change
	// from day 4. The blip is 0.6 closer to regime 2, less than the two
	// switches (1.0) it would take. Without the switch, regime 2 would have
	// to cover the first four days instead (+4.7, the cheaper way), so the
	// confidence is 4.7 / (4.7 + 0.5).
	// Each window is on the unit nearest to it, at most 0.6 from it.
	day := time.Date(2025, 3, 1, 0, 0, 0, 0, time.UTC)
	var ws []features.Window
	for i, v := range []float64{-1, -0.9, 0.3, -1.1, 0.9, 1, 1.2} {
		unit := max(0, int(math.Copysign(1, v)))
		ws = append(ws, features.Window{Site: "PS-01", Start: day.AddDate(0, 0, i), End: day.AddDate(0, 0, i+1),
			Scaled: []float64{v}, Unit: unit, QE: min(math.Abs(v-m.Map.Codebook[unit]), 0.6)})
	}

	res, err := timeline.Build(m, ws, timeline.DefaultConfig())
	if err != nil {
		log.Fatal(err)
	}
	var regimes []int
	for _, w := range ws {
		regimes = append(regimes, w.Regime)
	}
	fmt.Println(regimes)
	for _, s := range res.Switches {
		fmt.Printf("%s %s: %d → %d after %d windows, for %d, confidence %.2f\n",
			s.Site, s.Time.Format(time.DateOnly), s.From, s.To, s.Before, s.After, s.Confidence)
	}
	// Output:
	// [1 1 1 1 2 2 2]
	// PS-01 2025-03-05: 1 → 2 after 4 windows, for 3, confidence 0.90
}
