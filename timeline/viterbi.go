package timeline

import "github.com/kinmap/kinmap/internal/viterbi"

// Viterbi returns the state sequence s that minimises
//
//	initial[s[0]] + Σ_t costs[t][s[t]] + switchCost · #{t : s[t] ≠ s[t-1]}
//
// for T × K costs (T steps, K states): the Viterbi recursion of a hidden
// Markov model in negative-log form whose transitions cost nothing to stay
// and switchCost to move to any other state. A nil initial means no cost
// for any first state; to continue from a known earlier state p, pass
// initial[p] = 0 and switchCost elsewhere. Ties go to staying in the same
// state, then to the lowest state index. Costs must be finite. It returns
// nil for no steps and panics when the rows or initial do not all have K
// entries.
func Viterbi(costs [][]float64, switchCost float64, initial []float64) []int {
	path, _ := viterbi.Decode(costs, switchCost, initial, 1, viterbi.NoStart)
	return path
}
