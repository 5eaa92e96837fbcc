package mapper

import (
	"math"
	"slices"
	"strings"
	"testing"

	"github.com/kinmap/kinmap/lattice"
	"gonum.org/v1/gonum/mat"
)

// chainMap returns a flat chain whose units hold the given values.
func chainMap(values ...float64) *Map {
	return &Map{Lattice: lattice.Lattice{Cols: len(values), Rows: 1, Flat: true}, Dim: 1, Codebook: values}
}

// A worked example of Ward's criterion (J. H. Ward, JASA 58, 1963), done by
// hand: units 0, 1, 5, 6, 20 on a chain. The merge cost of groups A and B
// is n_A·n_B/(n_A+n_B)·(c_A − c_B)²: {0}+{1} and {5}+{6} cost ½ each (the
// tie goes to the lower pair), then {0,1}+{5,6} costs 1·(0.5 − 5.5)² = 25,
// and the last merge 4/5·(3 − 20)² = 231.2. The costs add up to the total
// sum of squares about the mean 6.4, which is 257.2.
func TestWardWorkedExample(t *testing.T) {
	m := chainMap(0, 1, 5, 6, 20)
	tree := wardTree(m, unitWeights(m.Units(), nil))
	want := []float64{0.5, 0.5, 25, 231.2}
	var total float64
	for i, mg := range tree {
		total += mg.cost
		if math.Abs(mg.cost-want[i]) > 1e-12 {
			t.Errorf("merge %d costs %g, want %g", i, mg.cost, want[i])
		}
	}
	if len(tree) != 4 || math.Abs(total-257.2) > 1e-12 {
		t.Errorf("%d merges costing %g in all, want 4 costing 257.2", len(tree), total)
	}
	for k, want := range map[int][]int{
		1: {0, 0, 0, 0, 0},
		2: {0, 0, 0, 0, 1},
		3: {0, 0, 1, 1, 2},
		5: {0, 1, 2, 3, 4},
	} {
		if got, _, err := FindRegimes(m, k, nil); err != nil || !slices.Equal(got, want) {
			t.Errorf("k = %d: %v, %v; want %v", k, got, err, want)
		}
	}
}

// Only lattice neighbours merge: on the chain 0, 10, 0.1 the two values
// near 0 are not adjacent, so 10 joins 0.1 (cost ½·9.9² = 49.005) before 0
// (cost 50), though unconstrained Ward would pair 0 with 0.1.
func TestWardMergesOnlyNeighbours(t *testing.T) {
	got, _, err := FindRegimes(chainMap(0, 10, 0.1), 2, nil)
	if err != nil || !slices.Equal(got, []int{0, 1, 1}) {
		t.Errorf("%v, %v; want [0 1 1]", got, err)
	}
}

// lanceWilliams is an independent agglomeration: it keeps the matrix of
// merge costs and updates it by the recurrence of G. N. Lance and W. T.
// Williams ("A general theory of classificatory sorting strategies",
// Computer Journal 9, 1967) for Ward's method,
//
//	d(k, i∪j) = ((n_i+n_k)·d(k,i) + (n_j+n_k)·d(k,j) − n_k·d(i,j)) / (n_i+n_j+n_k),
//
// starting from d = ½‖x_i − x_j‖², and merges the cheapest adjacent pair.
// It returns the costs in merge order.
func lanceWilliams(m *Map) []float64 {
	u := m.Units()
	d := make([][]float64, u)
	adj := make([][]bool, u)
	size := make([]float64, u)
	alive := make([]bool, u)
	for i := range u {
		d[i] = make([]float64, u)
		adj[i] = make([]bool, u)
		size[i], alive[i] = 1, true
		for j := range u {
			var s float64
			for k := range m.Dim {
				s += (m.Vector(i)[k] - m.Vector(j)[k]) * (m.Vector(i)[k] - m.Vector(j)[k])
			}
			d[i][j] = s / 2
		}
		for _, j := range m.Lattice.Neighbours(i) {
			adj[i][j] = true
		}
	}
	var costs []float64
	for range u - 1 {
		bi, bj, best := -1, -1, math.Inf(1)
		for i := range u {
			for j := i + 1; j < u; j++ {
				if alive[i] && alive[j] && adj[i][j] && d[i][j] < best {
					bi, bj, best = i, j, d[i][j]
				}
			}
		}
		costs = append(costs, best)
		// Merge bj into bi.
		for k := range u {
			if !alive[k] || k == bi || k == bj {
				continue
			}
			nk, ni, nj := size[k], size[bi], size[bj]
			v := ((ni+nk)*d[k][bi] + (nj+nk)*d[k][bj] - nk*d[bi][bj]) / (ni + nj + nk)
			d[k][bi], d[bi][k] = v, v
			adj[k][bi] = adj[k][bi] || adj[k][bj]
			adj[bi][k] = adj[k][bi]
		}
		size[bi] += size[bj]
		alive[bj] = false
	}
	return costs
}

func TestWardAgreesWithLanceWilliams(t *testing.T) {
	for _, l := range []lattice.Lattice{{Cols: 5, Rows: 4}, {Cols: 4, Rows: 4, Hex: true}, {Cols: 6, Rows: 3, Flat: true}} {
		m := randomMap(t, noiseData(200, 3, 8), l, 3)
		want := lanceWilliams(m)
		tree := wardTree(m, unitWeights(m.Units(), nil))
		if len(tree) != len(want) {
			t.Fatalf("%+v: %d merges, want %d", l, len(tree), len(want))
		}
		for i, mg := range tree {
			if math.Abs(mg.cost-want[i]) > 1e-9*(1+want[i]) {
				t.Errorf("%+v: merge %d costs %g, Lance–Williams %g", l, i, mg.cost, want[i])
			}
		}
	}
}

// Every regime is a connected area of the lattice.
func TestRegimesConnected(t *testing.T) {
	x, _ := clusterData(1500, 4, 5, 8, 0.6, 9)
	m, _, err := Train(x, Config{Cols: 10, Rows: 8, Hex: true, Epochs: 10})
	if err != nil {
		t.Fatal(err)
	}
	for _, k := range []int{2, 5, 9} {
		groups, _, err := FindRegimes(m, k, nil)
		if err != nil {
			t.Fatal(err)
		}
		if slices.Max(groups) != k-1 {
			t.Errorf("k = %d: groups up to %d", k, slices.Max(groups))
		}
		for g := range k {
			in := make([]bool, len(groups))
			for u, gg := range groups {
				in[u] = gg == g
			}
			if c := components(m.Lattice, in); c != 1 {
				t.Errorf("k = %d: regime %d in %d pieces", k, g, c)
			}
		}
	}
	if _, _, err := FindRegimes(m, m.Units()+1, nil); err == nil {
		t.Error("more regimes than units accepted")
	}
}

// Weighted by hits, by hand from the same definitions. Ward on the chain
// 0, 1, 5 with hits 2, 1, 0: the unused unit joins its neighbour at no
// cost, keeping the mean 1; then {0} (weight 2) and {1, 5} (weight 1) merge
// at 2·1/3·1² = 2/3, the weighted sum of squares about the weighted mean
// 1/3.
func TestWeightedByHand(t *testing.T) {
	tree := wardTree(chainMap(0, 1, 5), unitWeights(3, []int{2, 1, 0}))
	if len(tree) != 2 || tree[0].cost != 0 || math.Abs(tree[1].cost-2.0/3) > 1e-15 || tree[0].a != 1 || tree[0].b != 2 {
		t.Errorf("weighted Ward merges %+v, want {1 2 0} then a merge costing 2/3", tree)
	}
}

// Traits by hand: four windows (0, 0), (0, 0), (2, −2), (2, −2) have means
// 1 and −1 and sample standard deviations √(4/3); the regime of the last
// two differs by +1 and −1, that is ±0.866σ.
func TestDescribe(t *testing.T) {
	m := chainMap(0, 1)
	m.Dim = 2
	m.Codebook = []float64{0, 0, 2, -2}
	x := mat.NewDense(4, 2, []float64{0, 0, 0, 0, 2, -2, 2, -2})
	asg := m.Assign(x, 1)
	regs, err := Describe(m, []int{0, 1}, x, asg, []string{"flow.mean", "vibration.p95"})
	if err != nil {
		t.Fatal(err)
	}
	r := regs[1]
	if r.ID != 2 || !slices.Equal(r.Units, []int{1}) || !slices.Equal(r.Centroid, []float64{2, -2}) {
		t.Errorf("regime %+v", r)
	}
	if len(r.Traits) != 2 || math.Abs(r.Traits[0].Sigma-math.Sqrt(3)/2) > 1e-12 || math.Abs(r.Traits[1].Sigma+math.Sqrt(3)/2) > 1e-12 {
		t.Errorf("traits %+v", r.Traits)
	}
	if want := "flow.mean +0.9σ, vibration.p95 \u22120.9σ"; r.Description != want {
		t.Errorf("description %q, want %q", r.Description, want)
	}
	if _, err := Describe(m, []int{0}, x, asg, []string{"a", "b"}); err == nil || !strings.Contains(err.Error(), "groups") {
		t.Errorf("wrong group count: %v", err)
	}
}

// Traits come strongest first, at most three, and constant features are
// skipped.
func TestDescribeKeepsStrongest(t *testing.T) {
	n := 200
	x := mat.NewDense(n, 5, nil)
	rng := testRand(5)
	for i := range n {
		hi := float64(i % 2)
		x.SetRow(i, []float64{rng.NormFloat64(), 7, hi*3 + rng.NormFloat64()*0.1, -hi + rng.NormFloat64()*0.1, hi*0.2 + rng.NormFloat64()})
	}
	m, _, err := Train(x, Config{Cols: 6, Rows: 6, Epochs: 8})
	if err != nil {
		t.Fatal(err)
	}
	asg := m.Assign(x, 0)
	groups, _, err := FindRegimes(m, 2, nil)
	if err != nil {
		t.Fatal(err)
	}
	regs, err := Describe(m, groups, x, asg, []string{"a", "const", "b", "c", "d"})
	if err != nil {
		t.Fatal(err)
	}
	for _, r := range regs {
		if len(r.Traits) != 3 {
			t.Errorf("regime %d: %d traits", r.ID, len(r.Traits))
			continue
		}
		if r.Traits[0].Feature != "b" || r.Traits[1].Feature != "c" || math.Signbit(r.Traits[0].Sigma) == math.Signbit(r.Traits[1].Sigma) {
			t.Errorf("regime %d: %s", r.ID, r.Description)
		}
		for _, tr := range r.Traits {
			if tr.Feature == "const" {
				t.Errorf("regime %d lists a constant feature", r.ID)
			}
		}
	}
}
