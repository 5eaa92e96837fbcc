package binomial

import (
	"math"
	"testing"
)

// Tail agrees with the sum of the binomial probabilities written
// out: P(X ≥ k) = 1 − Σ_{i<k} C(n,i) pⁱ (1−p)ⁿ⁻ⁱ.
func TestTail(t *testing.T) {
	for _, c := range []struct {
		n, k int
		p    float64
	}{{28, 1, 0.01}, {28, 3, 0.01}, {28, 4, 0.01}, {7, 2, 0.05}, {100, 10, 0.05}} {
		sum, binom := 0.0, 1.0
		for i := range c.k {
			if i > 0 {
				binom = binom * float64(c.n-i+1) / float64(i)
			}
			sum += binom * math.Pow(c.p, float64(i)) * math.Pow(1-c.p, float64(c.n-i))
		}
		if got, want := Tail(c.n, c.k, c.p), 1-sum; math.Abs(got-want) > 1e-12 {
			t.Errorf("n=%d k=%d p=%g: %g, want %g", c.n, c.k, c.p, got, want)
		}
	}
	// In the far tail, where 1 − the sum loses every digit, against
	// scipy.stats.binom.sf(k − 1, n, p) (Debian's /usr/bin/python3).
	for _, c := range []struct {
		n, k    int
		p, want float64
	}{{28, 4, 0.01, 0.0001689790943517606}, {14, 14, 0.01, 1.0000000000000003e-28}, {5, 1, 0.2, 0.67232}} {
		if got := Tail(c.n, c.k, c.p); math.Abs(got-c.want) > 1e-9*c.want {
			t.Errorf("n=%d k=%d p=%g: %g, want %g", c.n, c.k, c.p, got, c.want)
		}
	}
}
