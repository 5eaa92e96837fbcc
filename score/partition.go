package score

import (
	"cmp"
	"maps"
	"math"
	"slices"
)

// contingency is the table of counts of two labellings of the same items.
type contingency struct {
	n          int
	rows, cols []int  // items per label of the first and second labelling
	cells      []cell // the pairs of labels that hold items, in order
}

// cell is the count of items with the labels rows[i] and cols[j].
type cell struct{ i, j, n int }

// newContingency counts the items of each pair of labels. It panics when
// the labellings differ in length.
func newContingency(a, b []int) contingency {
	if len(a) != len(b) {
		panic("score: labellings of different lengths")
	}
	c := contingency{n: len(a)}
	counts := map[[2]int]int{}
	ra, rb := map[int]int{}, map[int]int{}
	index := func(m map[int]int, counts *[]int, label int) int {
		i, ok := m[label]
		if !ok {
			i = len(*counts)
			m[label] = i
			*counts = append(*counts, 0)
		}
		(*counts)[i]++
		return i
	}
	for k := range a {
		i := index(ra, &c.rows, a[k])
		j := index(rb, &c.cols, b[k])
		counts[[2]int{i, j}]++
	}
	// In a fixed order, so that sums of logarithms do not vary with the
	// order of map iteration.
	for _, ij := range slices.SortedFunc(maps.Keys(counts), func(x, y [2]int) int {
		return cmp.Or(cmp.Compare(x[0], y[0]), cmp.Compare(x[1], y[1]))
	}) {
		c.cells = append(c.cells, cell{ij[0], ij[1], counts[ij]})
	}
	return c
}

// pairs is n choose 2.
func pairs(n int) float64 { return float64(n) * float64(n-1) / 2 }

// ARI returns the adjusted Rand index of two labellings of the same items
// (Hubert and Arabie 1985): (index − expected) / (max − expected),
// with index = Σ C(n_ij, 2) over the contingency table, max = (Σ C(a_i, 2)
// + Σ C(b_j, 2)) / 2 and expected = Σ C(a_i, 2) · Σ C(b_j, 2) / C(n, 2).
// Label values only name groups. Max equals expected only when both
// labellings put all items together or both put them all apart; the
// partitions are then the same and ARI is 1, as in scikit-learn. That case
// is told by the group counts, not by comparing the two sums, which
// rounding may part for a large n. It panics when the labellings differ in
// length.
func ARI(truth, pred []int) float64 {
	c := newContingency(truth, pred)
	if len(c.rows) <= 1 && len(c.cols) <= 1 || len(c.rows) == c.n && len(c.cols) == c.n {
		return 1
	}
	var index, sumRows, sumCols float64
	for _, x := range c.cells {
		index += pairs(x.n)
	}
	for _, n := range c.rows {
		sumRows += pairs(n)
	}
	for _, n := range c.cols {
		sumCols += pairs(n)
	}
	top := (sumRows + sumCols) / 2
	expected := sumRows * sumCols / pairs(c.n)
	return (index - expected) / (top - expected)
}

// AMI returns the adjusted mutual information of two labellings of the
// same items (Vinh, Epps and Bailey 2010, with the arithmetic mean of the
// entropies as the upper bound): (MI − E[MI]) / ((H(U) + H(V))/2 − E[MI]),
// where E[MI] is the expected mutual information of two random labellings
// with the same group sizes under the hypergeometric model. When both labellings have one label it is 1; otherwise a
// denominator that rounding made zero is replaced by ±ε of float64, with
// its sign kept, both as scikit-learn does. It panics when the labellings
// differ in length.
func AMI(truth, pred []int) float64 {
	c := newContingency(truth, pred)
	if len(c.rows) <= 1 && len(c.cols) <= 1 {
		return 1
	}
	n := float64(c.n)
	mi := 0.0
	for _, x := range c.cells {
		v := float64(x.n)
		mi += v / n * math.Log(n*v/(float64(c.rows[x.i])*float64(c.cols[x.j])))
	}
	mi = math.Max(mi, 0)
	emi := expectedMI(c)
	denom := (entropy(c.rows, c.n)+entropy(c.cols, c.n))/2 - emi
	const eps = 0x1p-52
	if denom < 0 {
		denom = math.Min(denom, -eps)
	} else {
		denom = math.Max(denom, eps)
	}
	return (mi - emi) / denom
}

// entropy is the entropy in nats of groups of the given sizes out of n.
func entropy(sizes []int, n int) float64 {
	h := 0.0
	for _, s := range sizes {
		if s > 0 {
			p := float64(s) / float64(n)
			h -= p * math.Log(p)
		}
	}
	return h
}

// expectedMI is the expected mutual information of two labellings with the
// group sizes of c, drawn at random (Vinh, Epps and Bailey 2010):
//
//	Σ_i Σ_j Σ_{n_ij} n_ij/N · log(N n_ij / (a_i b_j)) ·
//	    a_i! b_j! (N−a_i)! (N−b_j)! / (N! n_ij! (a_i−n_ij)! (b_j−n_ij)! (N−a_i−b_j+n_ij)!)
//
// with n_ij from max(1, a_i+b_j−N) to min(a_i, b_j); the factorials are
// taken through log Γ so that large fleets do not overflow.
func expectedMI(c contingency) float64 {
	lgf := func(k int) float64 { // log k!
		v, _ := math.Lgamma(float64(k) + 1)
		return v
	}
	N := c.n
	n := float64(N)
	lgN := lgf(N)
	emi := 0.0
	for _, a := range c.rows {
		for _, b := range c.cols {
			fixed := lgf(a) + lgf(b) + lgf(N-a) + lgf(N-b) - lgN
			for nij := max(1, a+b-N); nij <= min(a, b); nij++ {
				v := float64(nij)
				p := math.Exp(fixed - lgf(nij) - lgf(a-nij) - lgf(b-nij) - lgf(N-a-b+nij))
				emi += v / n * math.Log(n*v/(float64(a)*float64(b))) * p
			}
		}
	}
	return emi
}
