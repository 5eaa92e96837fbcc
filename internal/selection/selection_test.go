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

// Majority finds the value that fills more than half of a slice, which is
// then the middle order statistic that sorting gives, and finds none when
// no value does (counted directly).
func TestMajority(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 3))
	for trial := range 2000 {
		n := 1 + rng.IntN(40)
		v := make([]int64, n)
		for i := range v {
			v[i] = 600
			if rng.IntN(100) < trial%100 {
				v[i] = int64(rng.IntN(4)) * 300
			}
		}
		counts := map[int64]int{}
		for _, y := range v {
			counts[y]++
		}
		want, has := int64(0), false
		for y, c := range counts {
			if 2*c > n {
				want, has = y, true
			}
		}
		got, ok := Majority(slices.Clone(v))
		if ok != has || ok && got != want {
			t.Fatalf("%v: Majority gives %d, %v; want %d, %v", v, got, ok, want, has)
		}
		if ok {
			sorted := slices.Sorted(slices.Values(v))
			if sorted[n/2] != got || n%2 == 0 && sorted[n/2-1] != got {
				t.Fatalf("%v: majority %d is not the middle of %v", v, got, sorted)
			}
		}
	}
	if _, ok := Majority([]int64{}); ok {
		t.Error("an empty slice has a majority")
	}
}
