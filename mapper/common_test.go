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
		for s := range slots {
			w := tt.spread * rng.NormFloat64()
			for site := range sites {
				i := site*slots + s
				slot[i] = s
				for j := range dim {
					v := w*shared[j] + rng.NormFloat64()
					if j == 3 && site < sites/10 && s >= slots/2 {
						v += 3 // a regime of its own for a tenth of the sites
					}
					x.Set(i, j, v)
				}
			}
		}
		dirs := commonDirections(x, slot)
		if len(dirs) != tt.want {
			t.Fatalf("%s: %d common directions, want %d", tt.name, len(dirs), tt.want)
		}
		if tt.want > 0 {
			if c := math.Abs(dot(dirs[0], shared)); c < 0.99 {
				t.Errorf("%s: the direction found is at cosine %.3f to the planted one", tt.name, c)
			}
		}
	}
	if dirs := commonDirections(mat.NewDense(20, 2, nil), nil); dirs != nil {
		t.Errorf("without slots: %d directions, want none", len(dirs))
	}
}
