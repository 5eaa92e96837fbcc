// Package viterbi decodes sequences of per-step state costs into the
// cheapest state sequence under a switching penalty and a minimum dwell. The
// timeline decoding and the regime finder share it, so that the regimes are
// chosen by the same decoding that the timelines use.
package viterbi

import (
	"fmt"
	"math"
)

// Start is a state the decoding continues from: the state before the first
// step and the steps already spent in it.
type Start struct {
	State, Dwell int
}

// NoStart is no earlier state.
var NoStart = Start{State: -1}

// Decode returns the state sequence s that minimises
//
//	initial[s[0]] + Σ_t costs[t][s[t]] + switchCost · #{t : s[t] ≠ s[t-1]}
//
// for T × K costs (T steps, K states): the Viterbi recursion of a hidden
// Markov model in negative-log form whose transitions cost nothing to stay
// and switchCost to move to any other state, restricted to sequences whose
// every segment is at least minDwell steps long, except a sequence made of
// one segment only. It also returns the cost of the sequence. With from.State ≥ 0 the sequence
// continues a segment of that state already from.Dwell steps long, which
// counts towards its dwell.
//
// The state space is expanded to (k, d), d = min(steps spent in k so far,
// minDwell); leaving k is only allowed from d = minDwell.
//
// A nil initial means no cost for any first state. Ties go to staying in
// the same state, then to the lowest state index. Costs must be finite. It
// returns nil for no steps and panics when the rows or initial do not all
// have K entries.
func Decode(costs [][]float64, switchCost float64, initial []float64, minDwell int, from Start) ([]int, float64) {
	T := len(costs)
	if T == 0 {
		return nil, 0
	}
	K := len(costs[0])
	for t, row := range costs {
		if len(row) != K {
			panic(fmt.Sprintf("viterbi: row %d has %d costs, row 0 has %d", t, len(row), K))
		}
	}
	if initial != nil && len(initial) != K {
		panic(fmt.Sprintf("viterbi: %d initial costs for %d states", len(initial), K))
	}
	if K == 0 {
		panic("viterbi: no states")
	}
	M := max(minDwell, 1)
	// Only whether a segment has reached M matters. A segment begun in
	// these T steps never reaches an M beyond T, so M = T+1 decodes the
	// same once the earlier segment's dwell is shifted by as much. This
	// bounds the K·M·T table that a minimum dwell of 10⁹ would ask for.
	if M > T+1 {
		shift := M - (T + 1)
		M = T + 1
		if from.State >= 0 {
			from.Dwell = max(from.Dwell-shift, 0)
		}
	}
	S := K * M // state (k, d) is k*M + d-1
	inf := math.Inf(1)
	cur := make([]float64, S)
	next := make([]float64, S)
	back := make([][]int32, T) // back[t][s]: state at t-1
	for s := range cur {
		cur[s] = inf
	}
	for k := range K {
		c := costs[0][k]
		if initial != nil {
			c += initial[k]
		}
		d := 1
		switch {
		case k == from.State:
			d = min(from.Dwell+1, M)
		case from.State >= 0 && from.Dwell < M:
			continue // the earlier segment is too short to leave
		}
		cur[k*M+d-1] = c
	}
	for t := 1; t < T; t++ {
		back[t] = make([]int32, S)
		// Best and second best state ready to leave (d = M), so that the
		// cheapest other state is found in O(1) for each k.
		b1, b2 := -1, -1
		for k := range K {
			v := cur[k*M+M-1]
			switch {
			case b1 < 0 || v < cur[b1*M+M-1]:
				b1, b2 = k, b1
			case b2 < 0 || v < cur[b2*M+M-1]:
				b2 = k
			}
		}
		for k := range K {
			for d := 1; d <= M; d++ {
				s := k*M + d - 1
				best, from := inf, int32(-1)
				if d > 1 && cur[s-1] < best {
					best, from = cur[s-1], int32(s-1)
				}
				if d == M && cur[s] < best {
					best, from = cur[s], int32(s)
				}
				if d == 1 {
					j := b1
					if j == k {
						j = b2
					}
					if j >= 0 && cur[j*M+M-1]+switchCost < best {
						best, from = cur[j*M+M-1]+switchCost, int32(j*M+M-1)
					}
				}
				next[s] = best + costs[t][k]
				back[t][s] = from
			}
		}
		cur, next = next, cur
	}
	// A path must end in a finished segment, or be a single segment
	// shorter than M: one that starts the sequence, or continues from.
	end, total := -1, inf
	for k := range K {
		d := M
		switch {
		case k == from.State:
			d = min(from.Dwell+T, M)
		case from.State < 0:
			d = min(T, M)
		}
		if s := k*M + d - 1; end < 0 || cur[s] < total {
			end, total = s, cur[s]
		}
	}
	path := make([]int, T)
	for t, s := T-1, end; t >= 0; t-- {
		path[t] = s / M
		if t > 0 {
			s = int(back[t][s])
		}
	}
	return path, total
}

// Cost is the objective of Decode for a given state sequence.
func Cost(costs [][]float64, switchCost float64, initial []float64, path []int) float64 {
	var c float64
	for t, s := range path {
		c += costs[t][s]
		if t == 0 && initial != nil {
			c += initial[s]
		}
		if t > 0 && s != path[t-1] {
			c += switchCost
		}
	}
	return c
}
