package timeline

import (
	"math"
	"testing"

	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/lattice"
	"github.com/kinmap/kinmap/mapper"
	"github.com/kinmap/kinmap/model"
)

// spreadModel has two regimes over a channel's mean and spread: regime 1
// at mean 0 with spread 4, regime 2 at mean 10 with spread 0, on a flat
// 2 × 1 map whose training quantization errors spread evenly over [0, 1]
// (switch cost 1, unfamiliar above 0.99).
func spreadModel() *model.Model {
	m := testModel()
	m.Map = mapper.Map{Lattice: lattice.Lattice{Cols: 2, Rows: 1, Flat: true}, Dim: 2, Codebook: []float64{0, 4, 10, 0}}
	m.Regimes = []mapper.Regime{{ID: 1, Units: []int{0}, Centroid: []float64{0, 4}}, {ID: 2, Units: []int{1}, Centroid: []float64{10, 0}}}
	m.UnitRegime = []int{1, 2}
	m.Scaler = &features.Scaler{Method: "zscore", Names: []string{"x.mean", "x.std"}, Center: []float64{0, 0}, Scale: []float64{1, 1}, Weight: []float64{1, 1}}
	return m
}

// A site changes from regime 1 to regime 2 during day 6. The window of
// day 6 is partly in each: its mean lies at the share of the day after the
// change, and its spread, 14, is unlike either regime's. By its distances
// it is nearer regime 1 ((7.5, 14) is 12.5 from (0, 4) and 14.2 from
// (10, 0)) however much of it regime 2 holds; by its mean, a quarter or
// three quarters of it lies after the change. The switch is dated at the
// first window regime 2 holds most of; a window like the training windows
// (not unfamiliar) is left to its distances.
func TestBuildTransitionWindow(t *testing.T) {
	tests := []struct {
		name string
		mean float64 // of the transition window: 10 × the share after the change
		qe   float64
		want int // day of the switch
	}{
		{"three quarters after the change", 7.5, 5, 6},
		{"a quarter after the change", 2.5, 5, 7},
		{"familiar", 7.5, 0.5, 7},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			var ws []features.Window
			for d := range 14 {
				// The site's own days scatter about its regimes' means by
				// ±0.3, and its spread reads as the regime's.
				x, y := 0.3*math.Sin(float64(d)), 4.0
				if d > 6 {
					x, y = 10+0.3*math.Cos(float64(d)), 0
				}
				qe := 0.1
				if d == 6 {
					x, y, qe = tc.mean, 14, tc.qe
				}
				start := day0.AddDate(0, 0, d)
				ws = append(ws, features.Window{Site: "a", Start: start, End: start.AddDate(0, 0, 1), Scaled: []float64{x, y}, QE: qe})
			}
			res, err := Build(spreadModel(), ws, Config{})
			if err != nil {
				t.Fatal(err)
			}
			if len(res.Switches) != 1 {
				t.Fatalf("switches %+v, want one", res.Switches)
			}
			if got, want := res.Switches[0].Time, day0.AddDate(0, 0, tc.want); !got.Equal(want) {
				t.Errorf("switch at %s, want %s", got.Format("2006-01-02"), want.Format("2006-01-02"))
			}
			for d, w := range ws {
				if want := 1 + btoi(d >= tc.want); w.Regime != want {
					t.Errorf("day %d in regime %d, want %d", d, w.Regime, want)
				}
			}
		})
	}
}

func btoi(b bool) int {
	if b {
		return 1
	}
	return 0
}

// The projection on the line between two points against the formula
// worked by hand: (3, 4) between (0, 0) and (10, 0) is at 0.3; a NaN
// component is left out; points that do not differ give NaN.
func TestProjection(t *testing.T) {
	idx := []int{0, 1}
	if got := projection([]float64{3, 4}, []float64{0, 0}, []float64{10, 0}, idx); math.Abs(got-0.3) > 1e-12 {
		t.Errorf("projection %g, want 0.3", got)
	}
	if got := projection([]float64{math.NaN(), 4}, []float64{0, 0}, []float64{10, 8}, idx); math.Abs(got-0.5) > 1e-12 {
		t.Errorf("projection with a NaN component %g, want 0.5", got)
	}
	if got := projection([]float64{3, 4}, []float64{1, 1}, []float64{1, 1}, idx); !math.IsNaN(got) {
		t.Errorf("projection between equal points %g, want NaN", got)
	}
}
