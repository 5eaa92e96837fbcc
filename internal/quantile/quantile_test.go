package quantile

import (
	"math"
	"math/rand/v2"
	"os/exec"
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/kinmap/kinmap/internal/tooltest"
)

// Known answer: R's quantile(1:10), type 7 by default, prints
// 1.00 3.25 5.50 7.75 10.00 for 0, 25, 50, 75, 100 % (R documentation of
// quantile; from memory).
func TestSortedKnownAnswer(t *testing.T) {
	x := []float64{1, 2, 3, 4, 5, 6, 7, 8, 9, 10}
	for _, c := range []struct{ p, want float64 }{{0, 1}, {0.25, 3.25}, {0.5, 5.5}, {0.75, 7.75}, {1, 10}} {
		if got := Sorted(x, c.p); math.Abs(got-c.want) > 1e-12 {
			t.Errorf("Sorted(1:10, %v) = %v, want %v", c.p, got, c.want)
		}
	}
}

// Sorted agrees with numpy.quantile, whose default method ("linear") is
// definition 7 (numpy documentation of numpy.quantile), on samples of 1 to
// 200 values with ties, at the ends and at 101 levels in between.
func TestSortedAgreesWithNumpy(t *testing.T) {
	py := tooltest.Python(t, "numpy")
	rng := rand.New(rand.NewPCG(7, 13))
	levels := []float64{0, 1}
	for k := range 101 {
		levels = append(levels, float64(k)/100+0.0013)
	}
	levels = slices.DeleteFunc(levels, func(p float64) bool { return p > 1 })
	var input strings.Builder
	var samples [][]float64
	for _, n := range []int{1, 2, 3, 5, 10, 57, 200} {
		x := make([]float64, n)
		for i := range x {
			x[i] = math.Round(rng.NormFloat64()*40) / 8 // ties on purpose
		}
		slices.Sort(x)
		samples = append(samples, x)
		for _, v := range x {
			input.WriteString(strconv.FormatFloat(v, 'g', -1, 64) + " ")
		}
		input.WriteString("\n")
	}
	var ps []string
	for _, p := range levels {
		ps = append(ps, strconv.FormatFloat(p, 'g', -1, 64))
	}
	script := "import sys, numpy as np\n" +
		"p = np.array([" + strings.Join(ps, ",") + "])\n" +
		"for line in sys.stdin:\n" +
		"    x = np.array([float(v) for v in line.split()])\n" +
		"    print(' '.join(repr(float(v)) for v in np.quantile(x, p)))\n"
	cmd := exec.Command(py, "-c", script)
	cmd.Stdin = strings.NewReader(input.String())
	out, err := cmd.Output()
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSpace(string(out)), "\n")
	if len(lines) != len(samples) {
		t.Fatalf("numpy answered %d samples of %d", len(lines), len(samples))
	}
	for s, line := range lines {
		want := strings.Fields(line)
		for k, p := range levels {
			w, err := strconv.ParseFloat(want[k], 64)
			if err != nil {
				t.Fatal(err)
			}
			if got := Sorted(samples[s], p); math.Abs(got-w) > 1e-12*(1+math.Abs(w)) {
				t.Errorf("n=%d p=%g: %g, numpy %g", len(samples[s]), p, got, w)
			}
		}
	}
}

// Spread, by selection, gives exactly what Sorted gives of the sorted
// sample (checked against numpy above), on samples of every small size,
// with and without ties, signed zeros among them (equal values, whose
// order sorting too leaves open).
func TestSpreadMatchesSorted(t *testing.T) {
	rng := rand.New(rand.NewPCG(9, 9))
	for n := 1; n <= 300; n++ {
		for _, levels := range []int{3, 1 << 30} {
			x := make([]float64, n)
			for i := range x {
				x[i] = float64(rng.IntN(levels)) - 1
				if x[i] == 0 && rng.IntN(2) == 0 {
					x[i] = math.Copysign(0, -1)
				}
			}
			sorted := slices.Sorted(slices.Values(x))
			p05, p50, p95 := Spread(x)
			for _, c := range []struct{ p, got float64 }{{0.05, p05}, {0.5, p50}, {0.95, p95}} {
				if want := Sorted(sorted, c.p); c.got != want {
					t.Fatalf("n %d levels %d: quantile %v = %v, Sorted gives %v", n, levels, c.p, c.got, want)
				}
			}
		}
	}
}
