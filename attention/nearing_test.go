package attention

import (
	"fmt"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/stat"

	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/internal/trend"
	"github.com/kinmap/kinmap/timeline"
)

// A pump that wears moves from its regime towards a regime marked fault
// while the decoding still holds it in its own: it is listed at level
// nearing, above a confident switch between normal regimes, and the rate
// in its reason is the least-squares slope (gonum's stat.LinearRegression)
// of its windows' share of the way, by the dot product of the centroids'
// difference, less the median of its regime's sites on the same day. A
// move that the whole regime makes (weather), a site that stays put and a
// rise too slow to pass halfway within the long stay are not listed.
func TestRankNearing(t *testing.T) {
	fault := []float64{10, 0}
	centroids := map[int][]float64{1: {0, 0}, 2: fault, 3: {0, 10}}
	status := map[int]string{1: StatusNormal, 2: StatusFault, 3: StatusNormal}
	tests := []struct {
		name   string
		site   func(d int) float64 // site w's share of the way to the fault regime on day d
		fleet  func(d int) float64 // the same for the other sites
		listed bool
	}{
		{"wear from day 14", func(d int) float64 { return 0.04 * max(0, float64(d-14)) }, func(int) float64 { return 0 }, true},
		{"weather moves the whole regime", func(d int) float64 { return 0.04 * max(0, float64(d-14)) }, func(d int) float64 { return 0.04 * max(0, float64(d-14)) }, false},
		{"a steady site", func(int) float64 { return 0 }, func(int) float64 { return 0 }, false},
		{"a rise too slow to matter this week", func(d int) float64 { return 0.01 * float64(d) }, func(int) float64 { return 0 }, false},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			rng := rand.New(rand.NewPCG(7, 8))
			var ws []features.Window
			for _, site := range []string{"a", "p1", "p2", "p3", "p4", "p5", "p6", "w"} {
				for d := range 28 {
					s := tc.fleet(d)
					if site == "w" {
						s = tc.site(d)
					}
					e := features.Window{Site: site, Start: at(d), End: at(d + 1), Regime: 1,
						Scaled: []float64{10*s + 0.3*rng.NormFloat64(), 0.3 * rng.NormFloat64()}}
					if site == "a" && d >= 20 {
						e.Regime, e.Scaled[1] = 3, e.Scaled[1]+10
					}
					ws = append(ws, e)
				}
			}
			in := Input{Windows: ws, Status: status, Centroids: centroids,
				Switches: []timeline.Switch{{Site: "a", Time: at(20), From: 1, To: 3, Confidence: 0.95}}}
			rows := Rank(in, DefaultConfig())
			// w's share over its last week less the median of its
			// regime's sites on the same day, and its rate, by an
			// independent fit.
			var x, z []float64
			for d := 21; d < 28; d++ {
				var day []float64
				for _, e := range ws {
					if e.Start.Equal(at(d)) && e.Regime == 1 {
						day = append(day, floats.Dot(e.Scaled, fault)/floats.Dot(fault, fault))
					}
				}
				slices.Sort(day)
				med := (day[(len(day)-1)/2] + day[len(day)/2]) / 2
				x = append(x, float64(d))
				z = append(z, floats.Dot(ws[7*28+d].Scaled, fault)/floats.Dot(fault, fault)-med)
			}
			_, rate := stat.LinearRegression(x, z, nil, false)
			i := slices.IndexFunc(rows, func(r Row) bool { return r.Site == "w" })
			if !tc.listed {
				if i >= 0 {
					t.Errorf("w listed: %+v", rows[i])
				}
				if _, _, p := trend.Rise(x, z); tc.name == "a rise too slow to matter this week" && p >= DefaultConfig().NearingAlpha {
					t.Errorf("test premise: the slow rise has p = %.2g, not significant", p)
				}
				return
			}
			if i < 0 || rows[i].Level != Nearing {
				t.Fatalf("w not listed as nearing: %+v", rows)
			}
			if a := slices.IndexFunc(rows, func(r Row) bool { return r.Site == "a" }); a < 0 || rows[a].Level != Switch || rows[a].Rank <= rows[i].Rank {
				t.Errorf("a's switch between normal regimes is not below w: %+v", rows)
			}
			want := fmt.Sprintf("moving towards fault regime 2: over its last 7 windows in regime 1, %.1f %% of the way nearer a window", 100*rate)
			if !strings.Contains(rows[i].Reason, want) {
				t.Errorf("w's reason %q, want it to contain %q", rows[i].Reason, want)
			}
		})
	}
}
