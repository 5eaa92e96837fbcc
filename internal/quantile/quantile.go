// Package quantile computes sample quantiles by definition 7 of R. J.
// Hyndman and Y. Fan, "Sample quantiles in statistical packages", The
// American Statistician 50(4), 1996: quantile p of n sorted values lies at
// the 0-based position (n−1)·p, linearly interpolated between the order
// statistics either side. It is the default of R's quantile and of numpy's
// quantile and percentile. (gonum's stat.Quantile offers the empirical
// distribution and an interpolation at position n·p, definition 4, not 7.)
package quantile

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
