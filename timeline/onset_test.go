package timeline

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat"
)

// A site wears from day 10: its windows move from regime 1's centroid
// towards regime 2's by a tenth of the way a day, with day-to-day scatter.
// The decoding switches once they are nearer regime 2, about halfway; the
// onset is dated at the start of the rise. A site that steps from one
// regime to the other on a day, with the same scatter, has no onset
// before its switch.
func TestBuildDriftOnset(t *testing.T) {
	tests := []struct {
		name  string
		at    func(d int) float64 // share of the way to regime 2 on day d
		onset int                 // day of the onset, or -1: the switch's own
	}{
		{"wear from day 10", func(d int) float64 { return min(max(float64(d-9)*0.1, 0), 1) }, 10},
		{"a step on day 15", func(d int) float64 { return float64(btoi(d >= 15)) }, -1},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			rng := rand.New(rand.NewPCG(1, 2))
			var ws []window // site w, and six peers that stay in regime 1
			for d := range 28 {
				s := tc.at(d)
				ws = append(ws, window{site: "w", day: d, x: 10*s + 0.4*rng.NormFloat64(), y: 0.4 * rng.NormFloat64(), qe: 0.1})
				for i := range 6 {
					ws = append(ws, window{site: string(rune('p' + i)), day: d, x: 0.4 * rng.NormFloat64(), y: 0.4 * rng.NormFloat64(), qe: 0.1})
				}
			}
			res, err := Build(testModel(), inputs(ws), Config{})
			if err != nil {
				t.Fatal(err)
			}
			if len(res.Switches) != 1 || res.Switches[0].Site != "w" {
				t.Fatalf("switches %+v, want one of site w", res.Switches)
			}
			sw := res.Switches[0]
			want := sw.Time
			if tc.onset >= 0 {
				want = day0.AddDate(0, 0, tc.onset)
				if !sw.Time.After(want.AddDate(0, 0, 2)) {
					t.Fatalf("test premise: switch at %s, want it well after the onset", sw.Time.Format("2006-01-02"))
				}
			}
			if d := sw.Onset.Sub(want).Hours() / 24; math.Abs(d) > 1 {
				t.Errorf("onset %s, switch %s; want the onset at %s, give or take a day", sw.Onset.Format("2006-01-02"), sw.Time.Format("2006-01-02"), want.Format("2006-01-02"))
			}
		})
	}
}

// hinge agrees with a least-squares fit of the same two-column design
// (a constant and max(0, i − τ + 1)) solved by gonum's QR-based solver.
func TestHingeLeastSquares(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	z := make([]float64, 12)
	for i := range z {
		z[i] = 0.2*math.Max(0, float64(i-6)) + 0.1*rng.NormFloat64()
	}
	for _, tau := range []int{2, 5, 7, 10} {
		beta, mu, rss := hinge(z, tau)
		x := mat.NewDense(len(z), 2, nil)
		for i := range z {
			x.Set(i, 0, 1)
			x.Set(i, 1, math.Max(0, float64(i-tau+1)))
		}
		var coef mat.VecDense
		if err := coef.SolveVec(x, mat.NewVecDense(len(z), z)); err != nil {
			t.Fatal(err)
		}
		var fit mat.VecDense
		fit.MulVec(x, &coef)
		var want float64
		for i, v := range z {
			want += (v - fit.AtVec(i)) * (v - fit.AtVec(i))
		}
		if math.Abs(mu-coef.AtVec(0)) > 1e-9 || math.Abs(beta-coef.AtVec(1)) > 1e-9 || math.Abs(rss-want) > 1e-9 {
			t.Errorf("tau %d: mu %g beta %g rss %g, want %g %g %g", tau, mu, beta, rss, coef.AtVec(0), coef.AtVec(1), want)
		}
	}
}

// A step that the decoding dated four windows late is no drift: the
// windows before the switch end at the new level, a rise through them
// passes the t test, but a step fits them better by BIC, and no onset is
// reported. A ramp from window 6 is a drift, dated within a window. The
// premises are checked against least-squares fits of each model by
// gonum's stat.LinearRegression, independent of hinge and stepRSS.
func TestOnsetStepOrRamp(t *testing.T) {
	tests := []struct {
		name  string
		at    func(i int) float64 // the way to the new regime at window i
		n     int
		onset int // -1: none
	}{
		{"a step at window 8", func(i int) float64 { return 0.4 * float64(btoi(i >= 8)) }, 12, -1},
		{"a ramp from window 6", func(i int) float64 { return 0.05 * math.Max(0, float64(i-5)) }, 14, 6},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			rng := rand.New(rand.NewPCG(5, 6))
			z := make([]float64, tc.n)
			for i := range z {
				z[i] = tc.at(i) + 0.03*rng.NormFloat64()
			}
			// The best fit of each model over the onsets onsetOf tries.
			ls := func(x []float64) float64 {
				a, b := stat.LinearRegression(x, z, nil, false)
				var rss float64
				for i, v := range z {
					rss += (v - a - b*x[i]) * (v - a - b*x[i])
				}
				return rss
			}
			ramp, step := math.Inf(1), math.Inf(1)
			for tau := 2; tau <= tc.n-2; tau++ {
				h, s := make([]float64, tc.n), make([]float64, tc.n)
				for i := range z {
					h[i] = math.Max(0, float64(i-tau+1))
					s[i] = float64(btoi(i >= tau))
				}
				ramp, step = min(ramp, ls(h)), min(step, ls(s))
			}
			flat := stat.Variance(z, nil) * float64(tc.n-1)
			// BIC = n·ln(RSS/n) + k·ln n (Schwarz 1978); k counts the
			// variance: 2 for the constant, 4 for the ramp and the step.
			b := func(rss float64, k int) float64 {
				return float64(tc.n)*math.Log(rss/float64(tc.n)) + float64(k)*math.Log(float64(tc.n))
			}
			rampWins := b(ramp, 4) < b(step, 4) && b(ramp, 4) < b(flat, 2)
			if rampWins != (tc.onset >= 0) {
				t.Fatalf("test premise: BIC ramp %.1f, step %.1f, constant %.1f", b(ramp, 4), b(step, 4), b(flat, 2))
			}
			got := onsetOf(z)
			switch {
			case tc.onset < 0 && got != tc.n:
				t.Errorf("onset at window %d of %d, want none", got, tc.n)
			case tc.onset >= 0 && math.Abs(float64(got-tc.onset)) > 1:
				t.Errorf("onset at window %d of %d, want %d, give or take a window", got, tc.n, tc.onset)
			}
		})
	}
}
