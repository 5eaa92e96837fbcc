package trend

import (
	"math"
	"testing"
)

// Rise against scipy 1.x (Debian's /usr/bin/python3): with residuals whose
// lag-1 correlation is not positive, the one-sided p-value is half the
// two-sided one of scipy.stats.linregress; with a positive one, the t test
// of Bayley and Hammersley's effective sample size, computed by hand from
// linregress's fit and scipy.stats.t.sf:
//
//	r = stats.linregress(x, z); res = z - r.intercept - r.slope*x
//	rho = sum(res[1:]*res[:-1]) / sum(res*res); inf = (1+rho)/(1-rho)
//	se = sqrt(inf*sum(res*res)/(n-2)/sum((x-x.mean())**2))
//	stats.t.sf(r.slope/se, n/inf - 2)
func TestRiseAgainstScipy(t *testing.T) {
	idx := func(n int) []float64 {
		x := make([]float64, n)
		for i := range x {
			x[i] = float64(i)
		}
		return x
	}
	runs := []float64{0.1, 0.12, 0.08, -0.1, -0.12, -0.09, 0.11, 0.1, 0.09, -0.1, -0.11, -0.12}
	for i := range runs {
		runs[i] += 0.05 * float64(i)
	}
	tests := []struct {
		name    string
		x, z    []float64
		a, b, p float64
	}{
		{"alternating residuals", idx(10), []float64{0.1, 0.35, 0.2, 0.5, 0.38, 0.62, 0.5, 0.8, 0.66, 0.9},
			0.15709090909090906, 0.07642424242424244, 0.0001081018458127518},
		{"nearly independent residuals", idx(10), []float64{0, 0.1, 0.15, 0.1, 0.3, 0.45, 0.5, 0.45, 0.7, 0.8},
			-0.033636363636363686, 0.08636363636363636, 2.320211625477878e-06},
		{"residuals in runs (ρ = 0.46)", idx(12), runs, 0.07243589743589743, 0.036223776223776226, 0.05022222820217695},
	}
	for _, tc := range tests {
		a, b, p := Rise(tc.x, tc.z)
		if math.Abs(a-tc.a) > 1e-12 || math.Abs(b-tc.b) > 1e-12 || math.Abs(p-tc.p) > 1e-9*max(tc.p, 1e-3) {
			t.Errorf("%s: a %.15g b %.15g p %.15g, want %.15g %.15g %.15g", tc.name, a, b, p, tc.a, tc.b, tc.p)
		}
	}
	// Edge cases: too short, x constant, an exact rise.
	if _, _, p := Rise(idx(2), []float64{0, 1}); p != 1 {
		t.Errorf("two values: p %g, want 1", p)
	}
	if _, _, p := Rise([]float64{3, 3, 3, 3}, []float64{0, 1, 2, 3}); p != 1 {
		t.Errorf("constant x: p %g, want 1", p)
	}
	if _, b, p := Rise(idx(5), []float64{1, 2, 3, 4, 5}); b != 1 || p != 0 {
		t.Errorf("exact rise: b %g p %g, want 1 and 0", b, p)
	}
}
