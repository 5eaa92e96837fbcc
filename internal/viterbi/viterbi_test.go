package viterbi

import (
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
		got, gotCost := Decode(costs, sc, initial, minDwell, NoStart)
		if c := Cost(costs, sc, initial, got); math.Abs(c-gotCost) > 1e-9 {
			t.Fatalf("trial %d: Decode reports cost %g, Cost %g", trial, gotCost, c)
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

// Continuing from an earlier state must equal decoding the whole sequence
// with that state forced over the earlier steps: checked against the
// exhaustive search on sequences whose first steps can only be the earlier
// state (they cost nothing there and are forbidden elsewhere).
func TestDecodeFromEarlierState(t *testing.T) {
	r := rand.New(rand.NewPCG(3, 4))
	for trial := range 300 {
		T, K := 1+r.IntN(5), 2+r.IntN(2)
		minDwell := 1 + trial%3
		from := Start{State: r.IntN(K), Dwell: 1 + r.IntN(3)}
		costs := randomCosts(r, T, K)
		sc := r.Float64() * 2
		initial := make([]float64, K)
		for k := range initial {
			if k != from.State {
				initial[k] = sc
			}
		}
		want, wantCost, second := bruteForce(forcedPrefix(from.State, from.Dwell, costs), sc, nil, minDwell)
		got, gotCost := Decode(costs, sc, initial, minDwell, from)
		if math.Abs(gotCost-wantCost) > 1e-9 {
			t.Fatalf("trial %d (T=%d K=%d dwell %d, from %v): cost %g for %v, brute force %g for %v", trial, T, K, minDwell, from, gotCost, got, wantCost, want[from.Dwell:])
		}
		if second-wantCost > 1e-9 && !slices.Equal(got, want[from.Dwell:]) {
			t.Fatalf("trial %d: path %v, brute force %v (unique optimum)", trial, got, want[from.Dwell:])
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
		got, gotCost := Decode(costs, sc, nil, huge, NoStart)
		if math.Abs(gotCost-wantCost) > 1e-9 || !slices.Equal(got, want) {
			t.Fatalf("trial %d: cost %g for %v, brute force %g for %v", trial, gotCost, got, wantCost, want)
		}
		// Continuing a segment of huge−1 steps, the site may leave after
		// its first step, but no new segment can be finished: as after T
		// forced steps with a minimum dwell of T+1, brute-forced.
		from := Start{State: r.IntN(K), Dwell: huge - 1}
		initial := make([]float64, K)
		for k := range initial {
			if k != from.State {
				initial[k] = sc
			}
		}
		want, wantCost, _ = bruteForce(forcedPrefix(from.State, T, costs), sc, nil, T+1)
		got, gotCost = Decode(costs, sc, initial, huge, from)
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
