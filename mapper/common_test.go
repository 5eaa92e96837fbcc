package mapper

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// A variation every site shares at each time is found, along the
// direction it was planted in, and nothing is found when the sites vary
// on their own, even when a tenth of them change regime on the same day:
// the fleet's bulk did not move.
func TestCommonDirections(t *testing.T) {
	const sites, slots, dim = 100, 30, 5
	shared := []float64{1 / math.Sqrt2, 1 / math.Sqrt2, 0, 0, 0}
	for _, tt := range []struct {
		name   string
		spread float64 // of the shared variation, per slot
		want   int
	}{
		{"shared weather", 2, 1},
		{"none shared", 0, 0},
	} {
		rng := testRand(17)
		x := mat.NewDense(sites*slots, dim, nil)
		slot := make([]int, sites*slots)
		seqs := make([][]int, sites)
		for s := range slots {
			w := tt.spread * rng.NormFloat64()
			for site := range sites {
				i := site*slots + s
				slot[i] = s
				seqs[site] = append(seqs[site], i)
				for j := range dim {
					v := w*shared[j] + rng.NormFloat64()
					if j == 3 && site < sites/10 && s >= slots/2 {
						v += 3 // a regime of its own for a tenth of the sites
					}
					x.Set(i, j, v)
				}
			}
		}
		dirs, _ := commonDirections(x, slot, seqs)
		if len(dirs) != tt.want {
			t.Fatalf("%s: %d common directions, want %d", tt.name, len(dirs), tt.want)
		}
		if tt.want > 0 {
			if c := math.Abs(dot(dirs[0], shared)); c < 0.99 {
				t.Errorf("%s: the direction found is at cosine %.3f to the planted one", tt.name, c)
			}
		}
	}
	if dirs, _ := commonDirections(mat.NewDense(20, 2, nil), nil, nil); dirs != nil {
		t.Errorf("without slots: %d directions, want none", len(dirs))
	}
}

// slotsOf returns the day of every row of a fleet drawn by fleetSpec: row
// i is day i % days of its site.
func slotsOf(n, days int) []int {
	s := make([]int, n)
	for i := range s {
		s[i] = i % days
	}
	return s
}

// With the fleet's days as time slots, a weather that moves every site
// together, far more than the states differ, is left out: a fleet in one
// state keeps one regime, and the second state that 30 of 100 sites move
// to, each at its own time, is found (without the slots it is not: one
// regime).
func TestFindRegimesSharedWeather(t *testing.T) {
	for _, seed := range []uint64{21, 22} {
		for _, tt := range []struct {
			name  string
			state func(site, day int) int
			k     int
		}{
			{"one state", func(int, int) int { return 0 }, 1},
			{"two states", func(s, day int) int {
				if s < 30 && day >= 7+s/2 {
					return 1
				}
				return 0
			}, 2},
		} {
			spec := fleetSpec{
				sites: 100, days: 42,
				centres: [][]float64{{0, 0, 0, 0}, {0, -3, 3, 0}},
				state:   tt.state,
				siteSD:  0.4, weatherSD: 3, noiseSD: 0.3,
			}
			x, seqs, truth := spec.fleet(seed)
			m, _, err := Train(x, Config{Cols: 12, Rows: 10, Hex: true, Epochs: 12})
			if err != nil {
				t.Fatal(err)
			}
			asg := m.Assign(x, 1)
			n, _ := x.Dims()
			groups, ch, err := FindRegimes(m, 0, &Windows{X: x, Assignments: asg, Timelines: Timelines{Sequences: seqs, MinRun: 7, Slots: slotsOf(n, spec.days)}})
			if err != nil {
				t.Fatal(err)
			}
			found := make([]int, n)
			for i, a := range asg {
				found[i] = groups[a.BMU]
			}
			p, distinct := purity(truth, found)
			if ch.K != tt.k || distinct != tt.k || p < 0.9 || ch.Common < 1 {
				t.Errorf("seed %d, %s: %d regimes, %d distinct, purity %.3f, %d common directions (%+v); want %d, %d, ≥ 0.9, ≥ 1",
					seed, tt.name, ch.K, distinct, p, ch.Common, ch.Splits, tt.k, tt.k)
			}
		}
	}
}
