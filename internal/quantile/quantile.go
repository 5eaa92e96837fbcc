// Package quantile computes sample quantiles by definition 7 of R. J.
// Hyndman and Y. Fan, "Sample quantiles in statistical packages", The
// American Statistician 50(4), 1996: quantile p of n sorted values lies at
// the 0-based position (n−1)·p, linearly interpolated between the order
// statistics either side. It is the default of R's quantile and of numpy's
// quantile and percentile. (gonum's stat.Quantile offers the empirical
// distribution and an interpolation at position n·p, definition 4, not 7.)
package quantile

import (
	"slices"

	"github.com/kinmap/kinmap/internal/selection"
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

// between is the value the fraction f of the way from v to next, v when
// f is 0.
func between(v, next, f float64) float64 {
	if f == 0 {
		return v
	}
	return v + f*(next-v)
}

// Spread returns the 5, 50 and 95 % quantiles of the non-empty x, those
// Sorted gives of x sorted, reordering x. Selection instead of sorting:
// the median splits x, and each outer quantile is selected in its part.
// x must hold no NaN.
func Spread(x []float64) (p05, p50, p95 float64) {
	n := len(x)
	mid, f := Position(n, 0.5)
	selection.Nth(x, mid)
	next50 := x[mid]
	if mid+1 < n {
		next50 = slices.Min(x[mid+1:])
	}
	p50 = between(x[mid], next50, f)

	i, f := Position(n, 0.05)
	v, next := x[mid], next50
	if i < mid {
		selection.Nth(x[:mid], i)
		v, next = x[i], slices.Min(x[i+1:mid+1])
	}
	p05 = between(v, next, f)

	i, f = Position(n, 0.95)
	v, next = x[mid], next50
	if i > mid {
		selection.Nth(x[mid+1:], i-mid-1)
		v, next = x[i], x[i]
		if i+1 < n {
			next = slices.Min(x[i+1:])
		}
	}
	p95 = between(v, next, f)
	return p05, p50, p95
}
