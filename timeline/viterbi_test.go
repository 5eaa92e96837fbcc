package timeline

import (
	"fmt"
	"math"
	"slices"
	"testing"

	"github.com/kinmap/kinmap/internal/viterbi"
)

// Worked example: the two-state "Healthy/Fever" hidden Markov model of the
// Wikipedia article "Viterbi algorithm" (section "Example"; values from
// memory): start Healthy 0.6, Fever 0.4; transitions H→H 0.7, H→F 0.3,
// F→H 0.4, F→F 0.6; emissions Healthy: normal 0.5, cold 0.4, dizzy 0.1;
// Fever: normal 0.1, cold 0.3, dizzy 0.6. For the observations normal,
// cold, dizzy the most likely states are Healthy, Healthy, Fever with joint
// probability 0.01512 (the same recursion as Rabiner 1989, eqs. 32–35).
//
// In negative-log form, any two-state transition matrix becomes a uniform
// switch cost γ plus state costs α (leaving) and β (arriving) that fold
// into the step costs: −log a_ij = α_i + β_j + γ·[i≠j] with
// γ = ½(log a_HH + log a_FF − log a_HF − log a_FH), β_H = 0,
// α_H = −log a_HH, α_F = −log a_FH − γ, β_F = −log a_FF − α_F.
func TestViterbiWorkedExample(t *testing.T) {
	const H, F = 0, 1
	start := []float64{0.6, 0.4}
	a := [2][2]float64{{0.7, 0.3}, {0.4, 0.6}}
	emit := [2][3]float64{{0.5, 0.4, 0.1}, {0.1, 0.3, 0.6}} // normal, cold, dizzy
	obs := []int{0, 1, 2}

	l := func(p float64) float64 { return -math.Log(p) }
	gamma := 0.5 * (l(a[H][F]) + l(a[F][H]) - l(a[H][H]) - l(a[F][F]))
	alpha := [2]float64{l(a[H][H]), l(a[F][H]) - gamma}
	beta := [2]float64{0, l(a[F][F]) - alpha[F]}
	costs := make([][]float64, len(obs))
	for t, o := range obs {
		costs[t] = make([]float64, 2)
		for k := range 2 {
			costs[t][k] = l(emit[k][o])
			if t < len(obs)-1 {
				costs[t][k] += alpha[k]
			}
			if t > 0 {
				costs[t][k] += beta[k]
			}
		}
	}
	initial := []float64{l(start[H]), l(start[F])}

	got := Viterbi(costs, gamma, initial)
	if want := []int{H, H, F}; !slices.Equal(got, want) {
		t.Fatalf("states %v, want %v (Healthy, Healthy, Fever)", got, want)
	}
	if p := math.Exp(-viterbi.Cost(costs, gamma, initial, got)); math.Abs(p-0.01512) > 1e-12 {
		t.Errorf("joint probability %g, want 0.01512", p)
	}
}

func TestViterbiEdges(t *testing.T) {
	if got := Viterbi(nil, 1, nil); got != nil {
		t.Errorf("no steps: %v, want nil", got)
	}
	// One state: nothing to decide.
	if got := Viterbi([][]float64{{5}, {1}, {3}}, 1, nil); !slices.Equal(got, []int{0, 0, 0}) {
		t.Errorf("one state: %v", got)
	}
	// A known prior state holds a weak change back: staying in 0 costs
	// 0.4 + 0.4 = 0.8, switching to 1 costs 1 + 0 + 0 = 1.
	costs := [][]float64{{0.4, 0}, {0.4, 0}}
	if got := Viterbi(costs, 1, []float64{0, 1}); !slices.Equal(got, []int{0, 0}) {
		t.Errorf("with prior state 0: %v, want [0 0]", got)
	}
	if got := Viterbi(costs, 1, nil); !slices.Equal(got, []int{1, 1}) {
		t.Errorf("without prior: %v, want [1 1]", got)
	}
	for _, bad := range []struct {
		name    string
		costs   [][]float64
		initial []float64
	}{
		{"ragged", [][]float64{{1, 2}, {1}}, nil},
		{"initial", [][]float64{{1, 2}}, []float64{0}},
		{"no states", [][]float64{{}}, nil},
	} {
		t.Run(bad.name, func(t *testing.T) {
			defer func() {
				if recover() == nil {
					t.Error("no panic")
				}
			}()
			Viterbi(bad.costs, 1, bad.initial)
		})
	}
}

// A one-step excursion is not worth two switches; a lasting change is.
func ExampleViterbi() {
	costs := [][]float64{ // distance of each window to regimes 0 and 1
		{0.1, 2.0},
		{0.2, 1.9},
		{1.5, 0.9}, // one window a little closer to 1
		{0.1, 2.1},
		{2.0, 0.2},
		{2.2, 0.1},
		{1.9, 0.3},
	}
	fmt.Println(Viterbi(costs, 1, nil))
	fmt.Println(Viterbi(costs, 0, nil))
	// Output:
	// [0 0 0 0 1 1 1]
	// [0 0 1 0 1 1 1]
}
