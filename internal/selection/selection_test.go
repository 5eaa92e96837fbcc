package selection

import (
	"math/rand/v2"
	"slices"
	"testing"
)

// Nth agrees with sorting (the definition of an order statistic) on random
// slices with and without repeated values, and leaves no larger value
// before position k and no smaller one after it.
func TestNthAgreesWithSorting(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for trial := range 500 {
		v := make([]float64, 1+rng.IntN(80))
		for i := range v {
			v[i] = float64(rng.IntN(10))
			if trial%2 == 0 {
				v[i] = rng.Float64()
			}
		}
		sorted := slices.Sorted(slices.Values(v))
		k := rng.IntN(len(v))
		x := slices.Clone(v)
		Nth(x, k)
		if x[k] != sorted[k] {
			t.Fatalf("%v: position %d holds %g, sorting puts %g there", v, k, x[k], sorted[k])
		}
		for i, y := range x {
			if i < k && y > x[k] || i > k && y < x[k] {
				t.Fatalf("%v: %g at %d is on the wrong side of %g at %d", v, y, i, x[k], k)
			}
		}
	}
}

// Nth selects integers too, as the median sampling step of a series needs
// it: steps of a regular series with some doubled (a missed reading).
func TestNthIntegers(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 2))
	for _, n := range []int{1, 2, 5, 13, 64, 999} {
		v := make([]int64, n)
		for i := range v {
			v[i] = 600 * int64(1+rng.IntN(3)/2)
		}
		sorted := slices.Sorted(slices.Values(v))
		for k := range n {
			x := slices.Clone(v)
			Nth(x, k)
			if x[k] != sorted[k] {
				t.Fatalf("n=%d: position %d holds %d, sorting puts %d there", n, k, x[k], sorted[k])
			}
			for i, y := range x {
				if i < k && y > x[k] || i > k && y < x[k] {
					t.Fatalf("n=%d: %d at %d is on the wrong side of %d at %d", n, y, i, x[k], k)
				}
			}
		}
	}
}
