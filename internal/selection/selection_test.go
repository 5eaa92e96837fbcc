package selection

import (
	"cmp"
	"math/rand/v2"
	"slices"
	"testing"
)

// checkNth selects position k of a copy of v and fails t unless it holds
// what sorting puts there, with no larger value before it and no smaller
// one after it.
func checkNth[T cmp.Ordered](t *testing.T, v []T, k int) {
	t.Helper()
	sorted := slices.Sorted(slices.Values(v))
	x := slices.Clone(v)
	Nth(x, k)
	if x[k] != sorted[k] {
		t.Fatalf("%v: position %d holds %v, sorting puts %v there", v, k, x[k], sorted[k])
	}
	for i, y := range x {
		if i < k && y > x[k] || i > k && y < x[k] {
			t.Fatalf("%v: %v at %d is on the wrong side of %v at %d", v, y, i, x[k], k)
		}
	}
}

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
		checkNth(t, v, rng.IntN(len(v)))
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
		for k := range n {
			checkNth(t, v, k)
		}
	}
}
