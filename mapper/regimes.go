package mapper

import (
	"cmp"
	"container/heap"
	"fmt"
	"maps"
	"math"
	"slices"
	"strings"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat"

	"github.com/kinmap/kinmap/internal/quantile"
)

// maxAutoRegimes is the most regimes FindRegimes chooses by itself.
const maxAutoRegimes = 12

// maxTraits is the number of traits Describe keeps for a regime.
const maxTraits = 3

// Windows are the training windows as FindRegimes needs them to choose the
// regimes: their scaled features (one row per window), where each landed on
// the map, and the sites' timelines.
type Windows struct {
	X           *mat.Dense
	Assignments []Assignment
	Timelines
}

// Timelines are each site's windows in time order, as indices into the
// rows of the training windows, and the windows of a week (MinRun; 0 or
// 1: every window is a week of its own): a decoded segment shorter than
// MinRun counts only when it is the site's whole sequence, and a week whose
// departures from its home regime recur in a neighbouring week is read
// whole (see segments). With daily windows MinRun is 7: a week, the period
// of the calendar, so that weekly cycles average out within every segment
// that is tested.
//
// Slots, when set, holds the time slot of every window (its start in
// strides from the earliest), so that the windows of one slot are the
// fleet at one time, from which FindRegimes finds what the fleet shares
// (commonDirections); nil leaves that out.
type Timelines struct {
	Sequences [][]int
	MinRun    int
	Slots     []int
}

// FindRegimes groups the units of m into k regimes, returning the group
// (0 … K−1) of every unit, groups numbered in order of their lowest unit,
// and how K was reached.
//
// When win has time slots, what the whole fleet does together at each
// time (commonDirections) is first taken out of every window, and every
// unit that won windows stands for the mean of its windows so taken
// (withoutCommon); the grouping and the tests below see the fleet-relative
// windows, while the regimes' centroids (Describe) stay in the full space.
//
// The units are then agglomerated by Ward's minimum-variance criterion
// (J. H. Ward, "Hierarchical grouping to optimize an objective function",
// JASA 58, 1963), merging only groups that are adjacent on the lattice, so
// that every regime is a connected area of the map. With win, each unit
// weighs the windows it won, and Ward's criterion measures the windows,
// each stood for by its BMU's codebook vector; units that won nothing
// weigh nothing and join a neighbour at no cost. Without win every unit
// weighs one.
//
// The regimes are then found from the top of that tree down, one split at
// a time, with the site timelines in the loop: a regime is a state that a
// site holds for days. The windows of every site are decoded against the
// current regimes as the timelines are (Euclidean distances to the
// centroids, a switch cost of SwitchCostPerQE median quantization errors
// and a dwell of DefaultMinDwell windows, by the shared Viterbi decoder);
// each decoded segment — a run of one site in one regime, at least MinRun
// windows long, where a week whose departures from its home regime recur
// in a neighbouring week counts whole in its home (see segments) — counts
// as one observation, the mean of its windows, each window taken
// relative to the windows of the regime's other sites at the same time
// (see project). A regime's split into the two groups
// Ward joined last in it is tested as in G-means (G. Hamerly and C. Elkan,
// "Learning the k in k-means", NIPS 16, 2003): the segment means are
// projected on the line between the two groups' centroids and the
// Anderson–Darling test asks whether the projections could come from one
// normal distribution, beside the test for two groups on a line
// (Engelman and Hartigan 1969: how little of their spread the best two
// groups leave), whose power, unlike the first's, grows with the gap
// between two groups at any number of segments (splitP: each test at half
// the level); since any skew fails the test of normality, the split must also
// be preferred by the BIC for two modes over one after a power transform,
// with two modes in the fit (mixtureGain), and again with the two normals
// taken from the two groups the split makes instead of fitted freely
// (cutGain), so that the modes found are the split's own groups and not
// a few far segments inside one of them. Windows that vary from day to day around one state
// (weather, noise, a slow drift) average out within a segment and leave
// one mode; sites that hold two different states leave two. The segments,
// not the windows, are the sample, since the windows of one site in one
// state are far from independent.
//
// The most significant split is made first, and the segments decoded
// again. With k = 0, splitting stops when no split is significant at
// level Alpha with a positive gain (or at 12 regimes), so a homogeneous fleet keeps one
// regime; with k > 0 it goes on to k regimes, the most significant split
// first. A regime with fewer than minSegments segments cannot be tested
// and is split only to reach a given k, in Ward's order (the last merge
// first), which is all there is without win: FindRegimes(m, k, nil) cuts
// Ward's tree at k groups.
func FindRegimes(m *Map, k int, win *Windows) ([]int, *Choice, error) {
	u := m.Units()
	switch {
	case k < 0 || k > u:
		return nil, nil, fmt.Errorf("mapper: %d regimes asked of a map of %d units", k, u)
	case k == 0 && win == nil:
		return nil, nil, fmt.Errorf("mapper: choosing the number of regimes needs the training windows")
	}
	var hits []int
	if win != nil {
		if err := win.check(m); err != nil {
			return nil, nil, err
		}
		hits = m.hits(win.Assignments)
	}
	var common int
	if win != nil {
		if dirs, byslot := commonDirections(win.X, win.Slots, win.Sequences); len(dirs) > 0 {
			m, win = withoutCommon(m, win, byslot)
			common = len(dirs)
		}
	}
	w := unitWeights(u, hits)
	s := &splitter{m: m, w: w, tree: wardTree(m, w), win: win}
	if win != nil {
		s.switchCost = SwitchCostPerQE * medianQE(win.Assignments)
	}
	groups, ch, err := s.run(k)
	if ch != nil {
		ch.Common = common
	}
	return groups, ch, err
}

// check reports windows that do not fit m.
func (win *Windows) check(m *Map) error {
	if win.X == nil {
		return fmt.Errorf("mapper: no windows to find regimes on")
	}
	n, d := win.X.Dims()
	switch {
	case d != m.Dim:
		return fmt.Errorf("mapper: windows of %d features for a map of dimension %d", d, m.Dim)
	case len(win.Assignments) != n:
		return fmt.Errorf("mapper: %d assignments for %d windows", len(win.Assignments), n)
	}
	if win.Slots != nil && len(win.Slots) != n {
		return fmt.Errorf("mapper: %d time slots for %d windows", len(win.Slots), n)
	}
	seen := make([]bool, n)
	for _, seq := range win.Sequences {
		for _, i := range seq {
			if i < 0 || i >= n || seen[i] {
				return fmt.Errorf("mapper: window %d is outside the %d windows or in two sequences", i, n)
			}
			seen[i] = true
		}
	}
	return nil
}

// medianQE is the median quantization error of asg.
func medianQE(asg []Assignment) float64 {
	qe := make([]float64, len(asg))
	for i, a := range asg {
		qe[i] = a.QE
	}
	slices.Sort(qe)
	return quantile.Sorted(qe, 0.5)
}

// merge is one step of the agglomeration: clusters a and b, numbered as
// units 0 … U−1 and then U+s for the cluster made at step s, at a cost of
// the increase in the within-cluster sum of squares.
type merge struct {
	a, b int
	cost float64
}

// unitWeights returns the weight of every unit: its hits, or 1 for all.
func unitWeights(units int, hits []int) []float64 {
	w := make([]float64, units)
	for i := range w {
		w[i] = 1
		if hits != nil {
			w[i] = float64(hits[i])
		}
	}
	return w
}

// wardTree agglomerates the units of m, weighted by w, into one cluster,
// merging at every step the adjacent pair of clusters whose union least
// increases the within-cluster sum of squares, n_a·n_b/(n_a+n_b)·‖c_a − c_b‖²
// with n the clusters' weights. A cluster of weight zero merges at no cost;
// two of them merge into the plain mean of their means.
func wardTree(m *Map, w []float64) []merge {
	u := m.Units()
	size := make([]float64, u, 2*u)
	mean := make([][]float64, u, 2*u)
	adj := make([]map[int]bool, u, 2*u)
	active := make([]bool, u, 2*u)
	for i := range u {
		size[i] = w[i]
		mean[i] = m.Vector(i)
		adj[i] = make(map[int]bool)
		active[i] = true
	}
	cost := func(a, b int) float64 {
		if size[a] == 0 || size[b] == 0 {
			return 0
		}
		return size[a] * size[b] / (size[a] + size[b]) * sqdist(mean[a], mean[b])
	}
	var h edgeHeap
	for i := range u {
		for _, j := range m.Lattice.Neighbours(i) {
			adj[i][j] = true
			if i < j {
				h = append(h, edge{cost(i, j), i, j})
			}
		}
	}
	heap.Init(&h)
	tree := make([]merge, 0, u-1)
	for h.Len() > 0 {
		e := heap.Pop(&h).(edge)
		if !active[e.a] || !active[e.b] {
			continue // one side was merged since
		}
		c := len(size)
		tree = append(tree, merge{e.a, e.b, e.cost})
		n := size[e.a] + size[e.b]
		wa, wb := size[e.a], size[e.b]
		if n == 0 {
			wa, wb = 1, 1
		}
		v := make([]float64, m.Dim)
		for j := range v {
			v[j] = (wa*mean[e.a][j] + wb*mean[e.b][j]) / (wa + wb)
		}
		size, mean, active = append(size, n), append(mean, v), append(active, true)
		active[e.a], active[e.b] = false, false
		nb := make(map[int]bool)
		for _, side := range []int{e.a, e.b} {
			for k := range adj[side] {
				if k != e.a && k != e.b {
					nb[k] = true
					delete(adj[k], side)
					adj[k][c] = true
				}
			}
			adj[side] = nil
		}
		adj = append(adj, nb)
		for _, k := range slices.Sorted(maps.Keys(nb)) {
			heap.Push(&h, edge{cost(k, c), k, c})
		}
	}
	return tree
}

// edge is a candidate merge; the heap yields the cheapest, ties to the
// lowest pair of cluster numbers.
type edge struct {
	cost float64
	a, b int
}

type edgeHeap []edge

func (h edgeHeap) Len() int { return len(h) }
func (h edgeHeap) Less(i, j int) bool {
	if h[i].cost != h[j].cost {
		return h[i].cost < h[j].cost
	}
	if h[i].a != h[j].a {
		return h[i].a < h[j].a
	}
	return h[i].b < h[j].b
}
func (h edgeHeap) Swap(i, j int) { h[i], h[j] = h[j], h[i] }
func (h *edgeHeap) Push(x any)   { *h = append(*h, x.(edge)) }
func (h *edgeHeap) Pop() any {
	old := *h
	x := old[len(old)-1]
	*h = old[:len(old)-1]
	return x
}

// numberGroups labels units by their root, in order of the lowest unit.
func numberGroups(units int, root func(int) int) []int {
	label := make(map[int]int)
	g := make([]int, units)
	for i := range g {
		r := root(i)
		l, ok := label[r]
		if !ok {
			l = len(label)
			label[r] = l
		}
		g[i] = l
	}
	return g
}

// groupMeans returns the mean codebook vector of every group weighted by w,
// and the group's weight. A group of weight zero gets the plain mean of its
// vectors.
func groupMeans(m *Map, groups []int, k int, w []float64) ([][]float64, []float64) {
	cent := make([][]float64, k)
	for g := range cent {
		cent[g] = make([]float64, m.Dim)
	}
	weight := make([]float64, k)
	count := make([]float64, k)
	for u, g := range groups {
		weight[g] += w[u]
		count[g]++
	}
	for u, g := range groups {
		f := 1 / count[g]
		if weight[g] > 0 {
			f = w[u] / weight[g]
		}
		for j, v := range m.Vector(u) {
			cent[g][j] += f * v
		}
	}
	return cent, weight
}

// Describe builds the regimes of a grouping of the units of m (as from
// FindRegimes): regime g+1 for group g, with its units, its centroid (the
// mean codebook vector of its units, weighted by the windows of asg they
// won, or the plain mean when they won none) and its traits. A trait is a feature's
// standardised difference of the regime's windows from the fleet: the mean
// of the windows of x won by the regime's units, minus the mean of all
// windows, over the sample standard deviation of all windows. The largest
// differences in magnitude are kept, strongest first, with their sign;
// features that do not vary are skipped. A regime that wins no window is
// described by its centroid instead. x holds the windows of asg, with the
// columns named by names; the traits are the same in scaled and raw units,
// as scaling is affine per feature.
func Describe(m *Map, groups []int, x *mat.Dense, asg []Assignment, names []string) ([]Regime, error) {
	u := m.Units()
	n, d := x.Dims()
	switch {
	case len(groups) != u:
		return nil, fmt.Errorf("mapper: %d unit groups for a map of %d units", len(groups), u)
	case d != m.Dim || len(names) != d:
		return nil, fmt.Errorf("mapper: %d features named and %d in the data for a map of dimension %d", len(names), d, m.Dim)
	case len(asg) != n:
		return nil, fmt.Errorf("mapper: %d assignments for %d windows", len(asg), n)
	case u == 0:
		return nil, nil
	}
	k := slices.Max(groups) + 1
	regs := make([]Regime, k)
	for i := range u {
		g := groups[i]
		if g < 0 {
			return nil, fmt.Errorf("mapper: unit %d has group %d", i, g)
		}
		regs[g].Units = append(regs[g].Units, i)
	}
	cent, _ := groupMeans(m, groups, k, unitWeights(u, m.hits(asg)))
	sums := make([][]float64, k)
	wins := make([]int, k)
	for i, a := range asg {
		g := groups[a.BMU]
		if sums[g] == nil {
			sums[g] = make([]float64, d)
		}
		wins[g]++
		for j, v := range x.RawRowView(i) {
			sums[g][j] += v
		}
	}
	mean, sd := make([]float64, d), make([]float64, d)
	col := make([]float64, n)
	for j := range d {
		mean[j], sd[j] = stat.MeanStdDev(mat.Col(col, j, x), nil)
	}
	for g := range regs {
		if len(regs[g].Units) == 0 {
			return nil, fmt.Errorf("mapper: group %d has no unit; groups must be numbered 0 … %d", g, k-1)
		}
		at := cent[g]
		if wins[g] > 0 {
			at = sums[g]
			for j := range at {
				at[j] /= float64(wins[g])
			}
		}
		regs[g].ID = g + 1
		regs[g].Centroid = cent[g]
		regs[g].Traits = traits(at, mean, sd, names)
		regs[g].Description = describeTraits(regs[g].Traits)
	}
	return regs, nil
}

// traits returns the strongest standardised differences of at from mean.
func traits(at, mean, sd []float64, names []string) []Trait {
	var t []Trait
	for j := range at {
		if sd[j] > 0 {
			t = append(t, Trait{Feature: names[j], Sigma: (at[j] - mean[j]) / sd[j]})
		}
	}
	slices.SortStableFunc(t, func(a, b Trait) int { return cmp.Compare(math.Abs(b.Sigma), math.Abs(a.Sigma)) })
	return t[:min(len(t), maxTraits)]
}

// describeTraits writes traits as "vibration.p95 +2.1σ, flow.mean −1.4σ",
// with a true minus sign.
func describeTraits(t []Trait) string {
	parts := make([]string, len(t))
	for i, tr := range t {
		s := fmt.Sprintf("%+.1f", tr.Sigma)
		s = strings.Replace(s, "-", "\u2212", 1)
		parts[i] = tr.Feature + " " + s + "σ"
	}
	return strings.Join(parts, ", ")
}
