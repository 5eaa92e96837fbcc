// Package quantile computes sample quantiles by definition 7 of R. J.
// Hyndman and Y. Fan, "Sample quantiles in statistical packages", The
// American Statistician 50(4), 1996: quantile p of n sorted values lies at
// the 0-based position (n−1)·p, linearly interpolated between the order
// statistics either side. It is the default of R's quantile and of numpy's
// quantile and percentile. (gonum's stat.Quantile offers the empirical
// distribution and an interpolation at position n·p, definition 4, not 7.)
package quantile

import (
	"cmp"
	"slices"
)

// Position returns where quantile p in [0, 1] of n ≥ 1 sorted values lies:
// the fraction f of the way from the value of 0-based rank i to the next.
// f is 0 when i is the last rank.
func Position(n int, p float64) (i int, f float64) {
	h := float64(n-1) * p
	i = int(h)
	if i >= n-1 {
		return n - 1, 0
	}
	return i, h - float64(i)
}

// Sorted returns quantile p in [0, 1] of the non-empty ascending values x.
func Sorted(x []float64, p float64) float64 {
	i, f := Position(len(x), p)
	if f == 0 {
		return x[i]
	}
	return x[i] + f*(x[i+1]-x[i])
}

// Unsorted returns quantile p in [0, 1] of the non-empty values x, as
// Sorted does of them sorted, and reorders x. It selects the one or two
// order statistics it needs (C. A. R. Hoare, "Algorithm 65: Find",
// Communications of the ACM 4(7), 1961) in linear expected time instead of
// sorting; a three-way partition keeps runs of equal values, a stuck
// sensor's sign, linear too. x must hold no NaN.
func Unsorted(x []float64, p float64) float64 {
	i, f := Position(len(x), p)
	v := Select(x, i)
	if f == 0 {
		return v
	}
	// x[i+1:] now holds the values ranked above i: the next order
	// statistic is their least.
	return v + f*(slices.Min(x[i+1:])-v)
}

// Select returns the value of 0-based rank k in [0, len(x)) of x, and
// reorders x so that every value ranked above k lies after position k
// (Hoare's Find, as in Unsorted). Floating-point x must hold no NaN.
func Select[T cmp.Ordered](x []T, k int) T {
	lo, hi := 0, len(x) // x[lo:hi] holds rank k
	for hi-lo > 1 {
		a, b, c := x[lo], x[lo+(hi-lo)/2], x[hi-1]
		pivot := max(min(a, b), min(max(a, b), c)) // the median of the three
		// x[lo:lt] < pivot, x[lt:i] == pivot, x[gt:hi] > pivot.
		lt, i, gt := lo, lo, hi
		for i < gt {
			switch v := x[i]; {
			case v < pivot:
				x[lt], x[i] = v, x[lt]
				lt++
				i++
			case v > pivot:
				gt--
				x[gt], x[i] = v, x[gt]
			default:
				i++
			}
		}
		switch {
		case k < lt:
			hi = lt
		case k >= gt:
			lo = gt
		default:
			return pivot
		}
	}
	return x[k]
}
