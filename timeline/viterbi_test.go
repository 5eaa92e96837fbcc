package timeline

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// bruteForce enumerates every state sequence whose segments, except a lone
// segment, are at least minDwell long, and returns the cheapest and its
// cost, plus the cost of the runner-up.
func bruteForce(costs [][]float64, switchCost float64, initial []float64, minDwell int) (best []int, cost, second float64) {
	T, K := len(costs), len(costs[0])
	cost, second = math.Inf(1), math.Inf(1)
	seq := make([]int, T)
	for n := 0; n < int(math.Pow(float64(K), float64(T))); n++ {
		v := n
		for t := range seq {
			seq[t], v = v%K, v/K
		}
		if !dwellOK(seq, minDwell) {
			continue
		}
		// The objective written out directly, independently of pathCost.
		c := 0.0
		if initial != nil {
			c = initial[seq[0]]
		}
		for t := range seq {
			c += costs[t][seq[t]]
			if t > 0 && seq[t] != seq[t-1] {
				c += switchCost
			}
		}
		switch {
		case c < cost:
			best, cost, second = slices.Clone(seq), c, cost
		case c < second:
			second = c
		}
	}
	return best, cost, second
}

func dwellOK(seq []int, minDwell int) bool {
	run, segments := 0, 1
	for t := range seq {
		if t > 0 && seq[t] != seq[t-1] {
			if run < minDwell {
				return false
			}
			run, segments = 0, segments+1
		}
		run++
	}
	return segments == 1 || run >= minDwell
}

func randomCosts(r *rand.Rand, T, K int) [][]float64 {
	c := make([][]float64, T)
	for t := range c {
		c[t] = make([]float64, K)
		for k := range c[t] {
			c[t][k] = r.Float64() * 3
		}
	}
	return c
}

// The decoder must find the minimum of its objective: checked against an
// exhaustive search over all K^T sequences (the definition of the optimum).
func TestViterbiBruteForce(t *testing.T) {
	r := rand.New(rand.NewPCG(1, 2))
	for trial := range 400 {
		T, K := 1+r.IntN(7), 1+r.IntN(3)
		costs := randomCosts(r, T, K)
		sc := r.Float64() * 2
		var initial []float64
		if trial%2 == 1 {
			initial = make([]float64, K)
			for k := range initial {
				initial[k] = r.Float64() * 2
			}
		}
		minDwell := 1 + trial%3
		want, wantCost, second := bruteForce(costs, sc, initial, minDwell)
		var got []int
		var gotCost float64
		if minDwell == 1 {
			got = Viterbi(costs, sc, initial)
			gotCost = pathCost(costs, sc, initial, got)
		} else {
			got, gotCost = decode(costs, sc, initial, minDwell, noStart)
		}
		if !dwellOK(got, minDwell) {
			t.Fatalf("trial %d: %v breaks minimum dwell %d", trial, got, minDwell)
		}
		if math.Abs(gotCost-wantCost) > 1e-9 {
			t.Fatalf("trial %d (T=%d K=%d dwell %d): cost %g for %v, brute force %g for %v", trial, T, K, minDwell, gotCost, got, wantCost, want)
		}
		if second-wantCost > 1e-9 && !slices.Equal(got, want) {
			t.Fatalf("trial %d: path %v, brute force %v (unique optimum)", trial, got, want)
		}
	}
}

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
	if p := math.Exp(-pathCost(costs, gamma, initial, got)); math.Abs(p-0.01512) > 1e-12 {
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

// Continuing from an earlier state must equal decoding the whole sequence
// with that state forced over the earlier steps: checked against the
// exhaustive search on sequences whose first steps can only be the earlier
// state (they cost nothing there and are forbidden elsewhere).
func TestDecodeFromEarlierState(t *testing.T) {
	r := rand.New(rand.NewPCG(3, 4))
	for trial := range 300 {
		T, K := 1+r.IntN(5), 2+r.IntN(2)
		minDwell := 1 + trial%3
		from := start{state: r.IntN(K), dwell: 1 + r.IntN(3)}
		costs := randomCosts(r, T, K)
		sc := r.Float64() * 2
		initial := make([]float64, K)
		for k := range initial {
			if k != from.state {
				initial[k] = sc
			}
		}
		want, wantCost, second := bruteForce(forcedPrefix(from.state, from.dwell, costs), sc, nil, minDwell)
		got, gotCost := decode(costs, sc, initial, minDwell, from)
		if math.Abs(gotCost-wantCost) > 1e-9 {
			t.Fatalf("trial %d (T=%d K=%d dwell %d, from %v): cost %g for %v, brute force %g for %v", trial, T, K, minDwell, from, gotCost, got, wantCost, want[from.dwell:])
		}
		if second-wantCost > 1e-9 && !slices.Equal(got, want[from.dwell:]) {
			t.Fatalf("trial %d: path %v, brute force %v (unique optimum)", trial, got, want[from.dwell:])
		}
	}
}

// A minimum dwell far beyond the data (--min-dwell 1000000000) must decode
// as the definition says, checked by exhaustive search, without the
// K·minDwell table that ran out of memory.
func TestDecodeHugeDwell(t *testing.T) {
	r := rand.New(rand.NewPCG(5, 6))
	const huge = 1_000_000_000
	for trial := range 50 {
		T, K := 1+r.IntN(4), 2+r.IntN(2)
		costs := randomCosts(r, T, K)
		sc := r.Float64() * 2
		want, wantCost, _ := bruteForce(costs, sc, nil, huge)
		got, gotCost := decode(costs, sc, nil, huge, noStart)
		if math.Abs(gotCost-wantCost) > 1e-9 || !slices.Equal(got, want) {
			t.Fatalf("trial %d: cost %g for %v, brute force %g for %v", trial, gotCost, got, wantCost, want)
		}
		// Continuing a segment of huge−1 steps, the site may leave after
		// its first step, but no new segment can be finished: as after T
		// forced steps with a minimum dwell of T+1, brute-forced.
		from := start{state: r.IntN(K), dwell: huge - 1}
		initial := make([]float64, K)
		for k := range initial {
			if k != from.state {
				initial[k] = sc
			}
		}
		want, wantCost, _ = bruteForce(forcedPrefix(from.state, T, costs), sc, nil, T+1)
		got, gotCost = decode(costs, sc, initial, huge, from)
		if math.Abs(gotCost-wantCost) > 1e-9 || !slices.Equal(got, want[T:]) {
			t.Fatalf("trial %d: from %v: cost %g for %v, brute force %g for %v", trial, from, gotCost, got, wantCost, want[T:])
		}
	}
}

// forcedPrefix returns costs after steps that only state may take, so that
// exhaustive search sees a segment of that state already steps long.
func forcedPrefix(state, steps int, costs [][]float64) [][]float64 {
	forced := make([][]float64, 0, steps+len(costs))
	for range steps {
		row := make([]float64, len(costs[0]))
		for k := range row {
			if k != state {
				row[k] = math.Inf(1)
			}
		}
		forced = append(forced, row)
	}
	return append(forced, costs...)
}
