package attention

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"

	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/internal/quantile"
	"github.com/kinmap/kinmap/timeline"
)

// A pump that switched into regime 1 but whose windows since lie a third
// of the way towards fault regime 2, where none of regime 1's other
// windows lie, is listed at level nearing, above a confident switch
// between normal regimes; its reason counts all 14 windows since, at the
// binomial chance 0.01^14 (every one of 14 beyond the 99 % quantile), and
// 13 of 13 when one of them has no features. The same windows are not
// listed when the whole regime moves with them (weather), when they lie
// like their peers', when the site has sat there since before the run (no
// switch began its stay), or when it came out of the fault regime itself
// (its lie is the rest of the way out); in weather that moves every site
// of the regime each day, they are still all counted,
// since each is compared with its regime's sites on the same day.
func TestRankNearing(t *testing.T) {
	centroids := map[int][]float64{1: {0, 0}, 2: {10, 0}, 3: {0, 10}}
	status := map[int]string{1: StatusNormal, 2: StatusFault, 3: StatusNormal}
	third := func(d int) float64 {
		if d < 14 {
			return 0
		}
		return 1.0 / 3
	}
	weather := func(d int) float64 { return 0.25 * float64((d*7)%5-2) / 2 } // the same on every site each day
	tests := []struct {
		name   string
		site   func(d int) float64 // site w's share of the way to regime 2 on day d
		fleet  func(d int) float64 // the same for the other sites of regime 1
		from   int                 // w's regime before day 14 (3, or 2, the fault regime); 0: regime 1 throughout
		listed bool
		gap    int // a day of w's whose window has no features; 0: none
	}{
		{"windows towards the fault regime after a switch", third, func(int) float64 { return 0 }, 3, true, 0},
		{"one of them without features", third, func(int) float64 { return 0 }, 3, true, 20},
		{"the whole regime moves with them", third, third, 3, false, 0},
		{"windows towards the fault regime in weather that moves every site each day", func(d int) float64 { return weather(d) + third(d) }, weather, 3, true, 0},
		{"windows like their peers' after a switch", func(int) float64 { return 0 }, func(int) float64 { return 0 }, 3, false, 0},
		{"windows towards the fault regime without a switch", third, func(int) float64 { return 0 }, 0, false, 0},
		{"windows towards the fault regime after leaving it", third, func(int) float64 { return 0 }, 2, false, 0},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			rng := rand.New(rand.NewPCG(7, 8))
			var ws []features.Window
			sites := []string{"a", "w"}
			for i := range 40 {
				sites = append(sites, fmt.Sprintf("p%02d", i))
			}
			slices.Sort(sites)
			for _, site := range sites {
				for d := range 28 {
					s := tc.fleet(d)
					if site == "w" {
						s = tc.site(d)
					}
					e := features.Window{Site: site, Start: at(d), End: at(d + 1), Regime: 1,
						Scaled: []float64{10*s + 0.3*rng.NormFloat64(), 0.3 * rng.NormFloat64()}}
					switch {
					case site == "w" && tc.from == 2 && d < 14:
						e.Regime, e.Scaled[0] = 2, e.Scaled[0]+10
					case site == "w" && tc.from == 3 && d < 14, site == "a" && d >= 20:
						e.Regime, e.Scaled[1] = 3, e.Scaled[1]+10
					}
					if site == "w" && d == tc.gap && d > 0 {
						e.Scaled = nil
					}
					ws = append(ws, e)
				}
			}
			in := Input{Windows: ws, Status: status, Centroids: centroids,
				Switches: []timeline.Switch{{Site: "a", Time: at(20), From: 1, To: 3, Confidence: 0.95}}}
			if tc.from != 0 {
				in.Switches = append(in.Switches, timeline.Switch{Site: "w", Time: at(14), From: tc.from, To: 1, Confidence: 0.95})
			}
			rows := Rank(in, DefaultConfig())
			i := slices.IndexFunc(rows, func(r Row) bool { return r.Site == "w" && r.Level == Nearing })
			if !tc.listed {
				if i >= 0 {
					t.Errorf("w listed: %+v", rows[i])
				}
				return
			}
			if i < 0 {
				t.Fatalf("w not listed as nearing: %+v", rows)
			}
			if a := slices.IndexFunc(rows, func(r Row) bool { return r.Site == "a" }); a < 0 || rows[a].Level != Switch || rows[a].Rank <= rows[i].Rank {
				t.Errorf("a's switch between normal regimes is not below w: %+v", rows)
			}
			n := 14 - btoi(tc.gap > 0)
			want := fmt.Sprintf("in regime 1 since %s, but %d of its %d windows since lie further towards fault regime 2 than 99 %% of regime 1's windows (chance p = %.1g)",
				at(14).Format("2006-01-02"), n, n, math.Pow(0.01, float64(n)))
			if !strings.Contains(rows[i].Reason, want) {
				t.Errorf("w's reason %q, want it to contain %q", rows[i].Reason, want)
			}
		})
	}
}

// without agrees with quantile.Sorted of the values left once own are
// taken out, ties included.
func TestWithout(t *testing.T) {
	rng := rand.New(rand.NewPCG(9, 10))
	for trial := range 200 {
		all := make([]float64, 1+rng.IntN(60))
		for i := range all {
			all[i] = float64(rng.IntN(20))
		}
		slices.Sort(all)
		var own, rest []float64
		for _, v := range all {
			if rng.IntN(4) == 0 {
				own = append(own, v)
			} else {
				rest = append(rest, v)
			}
		}
		for _, q := range []float64{0, 0.5, 0.9, 0.99, 1} {
			got := without(all, own, q)
			if len(rest) == 0 {
				if !math.IsNaN(got) {
					t.Errorf("trial %d: %g with nothing left, want NaN", trial, got)
				}
				continue
			}
			if want := quantile.Sorted(rest, q); got != want {
				t.Errorf("trial %d, q %g: %g, want %g (all %v, own %v)", trial, q, got, want, all, own)
			}
		}
	}
}

func btoi(b bool) int {
	if b {
		return 1
	}
	return 0
}
