package mapper

import (
	"fmt"
	"math"
	"slices"

	"github.com/kinmap/kinmap/internal/viterbi"
)

// Decoding settings with which FindRegimes reads the site timelines: those
// of the timeline package's defaults, so that the regimes are chosen on
// the decoding that the timelines will show.
const (
	// SwitchCostPerQE is the cost of a change of regime in median
	// quantization errors of the training windows.
	SwitchCostPerQE = 2
	// DefaultMinDwell is the least number of windows a site spends in a
	// regime on each side of a switch.
	DefaultMinDwell = 2
)

// Alpha is the significance level at which FindRegimes makes a split: the
// level G-means uses (Hamerly and Elkan 2003). A strict level suits a test
// made many times, on the regimes of every step.
const Alpha = 1e-4

// Choice records how FindRegimes reached the number of regimes K: every
// split it made, and the best split it turned down, with the test of each.
// It goes into the model and run.json.
type Choice struct {
	K     int  `json:"k"`     // regimes found
	Given bool `json:"given"` // K was asked for, not chosen
	// Kept is set with Given when K was not asked for by the user but kept
	// from the model being updated.
	Kept   bool    `json:"kept,omitempty"`
	Alpha  float64 `json:"alpha"`  // significance level of a split
	Splits []Split `json:"splits"` // in the order made; a last one not made, when one was tested
	// Common is the number of directions of variation the fleet shared at
	// each time, left out before the regimes were grouped.
	Common int `json:"common_directions"`

	// RunnerUp is the other number of regimes that came closest, K−1
	// (undo the weakest split made) or K+1 (make the strongest split
	// turned down), and RunnerUpP and RunnerUpGain the p-value and BIC
	// gain of that split (the lesser of Gain and CutGain when the cut was
	// tested); 0 when K was given or there is none.
	RunnerUp     int     `json:"runner_up,omitempty"`
	RunnerUpP    float64 `json:"runner_up_p,omitempty"`
	RunnerUpGain float64 `json:"runner_up_bic_gain,omitempty"`
	// Marginal is set when the runner-up's deciding test came within one
	// band of going the other way: its p-value within a factor of ten of
	// Alpha, or its BIC gain within bicBand of 0. The data barely tell the
	// two apart.
	Marginal bool `json:"marginal"`
}

// Split is one split of a regime in two, tested on the decoded segments
// of its sites.
type Split struct {
	K         int     `json:"k"`         // regimes after the split
	Segments  int     `json:"segments"`  // decoded segments tested; 0 when too few to test
	Statistic float64 `json:"statistic"` // Anderson–Darling A*² of their projections
	// Index is the share of the projections' sum of squares left within
	// their best two groups (twoGroupIndex); 0 when the test of normality
	// decided alone.
	Index float64 `json:"two_group_index,omitempty"`
	// P is the split's p-value (splitP): twice the lesser of the test of
	// normality's and the test for two groups' (Bonferroni); 1 when not
	// tested.
	P float64 `json:"p"`
	// Gain is the BIC's preference for two modes over one in the
	// projections after a power transform (mixtureGain); a split needs
	// it positive as well as P below Alpha. 0 when not tested.
	Gain    float64 `json:"bic_gain"`
	Bimodal bool    `json:"bimodal"` // the two-normal fit of Gain has two modes (bimodal)
	// CutGain and CutBimodal are the same test re-run with the split's
	// own two groups in place of the free mixture (cutGain): the two
	// modes must be the two regimes the split makes. Tested only when
	// the free test passed and each group holds a tested segment; 0 and
	// false otherwise.
	CutGain    float64 `json:"cut_bic_gain"`
	CutBimodal bool    `json:"cut_bimodal"`
	// Unheld is set when, decoded with the two groups, the sites hold
	// one of them in no segment: the split separates no state, so there
	// is no cut to test, and the modes are tested at the split below.
	Unheld bool `json:"unheld"`
	Made   bool `json:"made"`
}

// splitter divides Ward's tree of the units from the top down.
type splitter struct {
	m          *Map
	w          []float64 // unit weights
	tree       []merge
	win        *Windows // nil: Ward's order only
	switchCost float64
	null       twoGroupNull // the two-group test's draws; made when first needed
}

// candidate is the test of splitting one regime of the current partition.
type candidate struct {
	at       int // index in the partition
	segments int
	stat, p  float64
	index    float64 // twoGroupIndex of the projections; 0 when not needed
	gain     float64 // mixtureGain of the projections
	bimodal  bool    // whether that two-mode fit has two modes
	cutGain  float64 // cutGain of the segments decoded with the two groups
	cutTwo   bool    // whether that fit has two modes
	unheld   bool    // a group holds no tested segment
}

// significant reports whether the split passes the normality test, the
// two-mode test, and the two-mode test of the split it makes.
func (c candidate) significant() bool {
	return c.p < Alpha && c.gain > 0 && c.bimodal && (c.unheld || c.cutGain > 0 && c.cutTwo)
}

// run splits from the root until k groups (k > 0) or while a split is
// significant (k = 0).
func (s *splitter) run(k int) ([]int, *Choice, error) {
	u := s.m.Units()
	parts := []int{u + len(s.tree) - 1} // tree nodes; the root
	ch := &Choice{Given: k > 0, Alpha: Alpha}
	limit := k
	if k == 0 {
		limit = min(maxAutoRegimes, u)
	}
	for len(parts) < limit {
		best, ok := s.best(parts)
		if !ok {
			break // only single units are left
		}
		made := k > 0 || best.significant()
		ch.Splits = append(ch.Splits, Split{K: len(parts) + 1, Segments: best.segments, Statistic: best.stat, Index: best.index, P: best.p, Gain: best.gain, Bimodal: best.bimodal, CutGain: best.cutGain, CutBimodal: best.cutTwo, Unheld: best.unheld, Made: made})
		if !made {
			break
		}
		mg := s.tree[parts[best.at]-u]
		parts = append(parts[:best.at], append([]int{mg.a, mg.b}, parts[best.at+1:]...)...)
	}
	ch.K = len(parts)
	if k == 0 {
		ch.runnerUp()
	}
	root := make([]int, u)
	for i, p := range parts {
		s.eachUnit(p, func(unit int) { root[unit] = i })
	}
	return numberGroups(u, func(unit int) int { return root[unit] }), ch, nil
}

// bicBand is the BIC difference within which a choice is marginal: below
// 2 the evidence is "not worth more than a bare mention" (R. E. Kass and
// A. E. Raftery, "Bayes factors", JASA 90, 1995).
const bicBand = 2

// runnerUp sets the runner-up: the weakest split made or the strongest
// turned down, whichever decision lies closest to going the other way.
// Distances are counted in marginal bands: decades of the p-value from
// Alpha, and units of bicBand of the BIC gain. A made split is as close
// as the weaker of its tests; a split turned down by the normality test
// as close as its p-value (the mixture is fitted only to samples that
// test rejects), and one turned down by the mixture as close as its gain,
// or never close when the fitted mixture has one mode; the same for the
// mixture of the split's own groups (cutGain), tested when the free
// mixture passes, whose gain is then the split's when it is the lesser.
func (ch *Choice) runnerUp() {
	decades := func(p float64) float64 { return math.Abs(math.Log10(math.Max(p, 1e-300) / ch.Alpha)) }
	best := math.Inf(1)
	for _, sp := range ch.Splits {
		if sp.Segments == 0 {
			continue
		}
		gain := sp.Gain
		if sp.Gain > 0 && sp.Bimodal && !sp.Unheld {
			gain = math.Min(gain, sp.CutGain) // the split's own groups were tested too
		}
		var c float64
		switch {
		case sp.Made:
			c = math.Min(decades(sp.P), gain/bicBand)
		case sp.P >= ch.Alpha:
			c = decades(sp.P)
		case !sp.Bimodal || sp.Gain > 0 && !sp.Unheld && !sp.CutBimodal:
			c = math.Inf(1)
		default:
			c = -gain / bicBand
		}
		if c < best {
			best, ch.RunnerUpP, ch.RunnerUpGain = c, sp.P, gain
			ch.RunnerUp = sp.K
			if sp.Made {
				ch.RunnerUp = sp.K - 1
			}
		}
	}
	ch.Marginal = best <= 1
}

// best returns the split to make next in the partition parts: the most
// significant one, or, when none can be tested, the one Ward made last.
// It reports false when no group has two parts.
func (s *splitter) best(parts []int) (candidate, bool) {
	u := s.m.Units()
	var tested []candidate
	if s.win != nil {
		tested = s.test(parts)
	}
	var out candidate
	found := false
	for _, c := range tested {
		if c.segments == 0 {
			continue
		}
		better := !found || c.significant() && !out.significant() ||
			c.significant() == out.significant() && (c.p < out.p || c.p == out.p && c.stat > out.stat)
		if better {
			out, found = c, true
		}
	}
	if found {
		return out, true
	}
	last := -1
	for i, p := range parts {
		if p >= u && (last < 0 || p > parts[last]) {
			last = i
		}
	}
	return candidate{at: last, p: 1}, last >= 0
}

// test decodes the site sequences against the groups of parts and tests
// the split of every group that has two parts, both of which won windows.
func (s *splitter) test(parts []int) []candidate {
	u, d := s.m.Units(), s.m.Dim
	if s.null == nil {
		s.null = twoGroupNull{}
	}
	cents := make([][]float64, len(parts))
	for i, p := range parts {
		cents[i], _ = s.centroid(p)
	}
	segs := s.segments(cents)
	var out []candidate
	for i, p := range parts {
		if p < u {
			continue
		}
		mg := s.tree[p-u]
		ca, wa := s.centroid(mg.a)
		cb, wb := s.centroid(mg.b)
		if wa == 0 || wb == 0 {
			continue // a group that won nothing is no regime
		}
		dir := make([]float64, d)
		for j := range dir {
			dir[j] = ca[j] - cb[j]
		}
		proj := s.project(segs, i, dir)
		c := candidate{at: i, p: 1}
		if len(proj) >= minSegments {
			c.segments, c.stat = len(proj), andersonDarling(proj)
			c.p, c.index = splitP(proj, c.stat, s.null)
			// The mixtures are costly and decide only what the tests
			// before them would split; a sample they cannot fit (no
			// spread, a side of the cut empty) keeps gain 0, so that
			// run.json holds finite numbers.
			if c.p < Alpha {
				if g, bi := mixtureGain(proj); !math.IsInf(g, 0) {
					c.gain, c.bimodal = g, bi
				}
				if c.gain > 0 && c.bimodal {
					c.cutGain, c.cutTwo, c.unheld = s.cut(cents, i, ca, cb, dir)
				}
			}
		}
		out = append(out, c)
	}
	return out
}

// cut tests the split of regime i into the groups of centroids ca and cb
// (cutGain): the sites are decoded again with them in place of cents[i],
// and the segments decoded in either group are projected on dir. unheld
// reports that the sites hold one group in no segment; gain is 0 when
// there was nothing to fit.
func (s *splitter) cut(cents [][]float64, i int, ca, cb, dir []float64) (gain float64, two, unheld bool) {
	kids := append(slices.Clone(cents), cb)
	kids[i] = ca
	segs := s.segments(kids)
	var second []bool // of the segments of either group, in order: in cb's
	for j := range segs {
		switch segs[j].regime {
		case i:
			second = append(second, false)
		case len(cents):
			segs[j].regime = i // so that project takes both groups
			second = append(second, true)
		}
	}
	unheld = !slices.Contains(second, true) || !slices.Contains(second, false)
	if len(second) >= minSegments && !unheld {
		if g, bi := cutGain(s.project(segs, i, dir), second); !math.IsInf(g, 0) {
			return g, bi, false
		}
	}
	return 0, false, unheld
}

// project returns the projection on dir of every segment of regime r:
// the mean over its windows of each window's projection less that of its
// peers, the median projection of the windows of the segments of r at the
// same time slot (when at least minSlotWindows share it), less their
// median over all slots. What the sites of one regime do together at a
// time (the weather that heats only the sites heating, a holiday of the
// offices) is no state of one site, and so judged against its peers at
// the same time, as peer group analysis judges an account (R. J. Bolton
// and D. J. Hand, "Unsupervised profiling methods for fraud detection",
// Credit Scoring and Credit Control VII, 2001); a sub-state that some of
// the sites hold throughout moves every slot's median alike and keeps
// its offset.
func (s *splitter) project(segs []segment, r int, dir []float64) []float64 {
	x := s.win.X
	var pv []float64 // projection of every window of r's segments, in order
	bySlot := map[int][]float64{}
	for _, sg := range segs {
		if sg.regime != r {
			continue
		}
		for _, i := range sg.rows {
			v := dot(dir, x.RawRowView(i))
			pv = append(pv, v)
			if s.win.Slots != nil {
				bySlot[s.win.Slots[i]] = append(bySlot[s.win.Slots[i]], v)
			}
		}
	}
	shift := map[int]float64{}
	if len(bySlot) > 0 {
		all := slices.Sorted(slices.Values(pv))
		mid := median(all)
		for slot, vs := range bySlot {
			if len(vs) >= minSlotWindows {
				slices.Sort(vs)
				shift[slot] = median(vs) - mid
			}
		}
	}
	var out []float64
	k := 0
	for _, sg := range segs {
		if sg.regime != r {
			continue
		}
		var sum float64
		for _, i := range sg.rows {
			sum += pv[k]
			if s.win.Slots != nil {
				sum -= shift[s.win.Slots[i]]
			}
			k++
		}
		out = append(out, sum/float64(len(sg.rows)))
	}
	return out
}

// segment is a run of one site's windows decoded in one regime: the rows
// of its windows.
type segment struct {
	regime int
	rows   []int
}

// segments decodes every site sequence against the centroids and returns
// its segments: runs of a site's windows with one label. A week of a site
// (MinRun windows, aligned on the time slots) has a home, the regime most
// of its windows were decoded in. When the week leaves its home for a
// regime that a neighbouring week with the same home also leaves it for,
// the departure recurs from week to week, so it is the site's calendar or
// habit and not a state (an office at the weekend): the whole week is
// labelled with its home, and its mean carries no weekly cycle. Otherwise
// its windows keep the regimes they were decoded in. A periodic
// component can only be told from a passing state by seeing it again a
// period later (the seasonal component of classical decomposition is
// estimated across periods; R. J. Hyndman and G. Athanasopoulos,
// "Forecasting: Principles and Practice", 3rd ed., 2021, section 3.4), so
// a stay seen once, as every stay is in one week of data, keeps its
// evidence for a small regime. A segment shorter than MinRun windows
// counts only when it is the site's whole sequence.
func (s *splitter) segments(cents [][]float64) []segment {
	x := s.win.X
	week := max(1, s.win.MinRun)
	var out []segment
	var costs [][]float64
	votes := make([]int, len(cents))
	for _, seq := range s.win.Sequences {
		costs = costs[:0]
		for _, i := range seq {
			row := make([]float64, len(cents))
			for k, c := range cents {
				row[k] = math.Sqrt(sqdist(x.RawRowView(i), c))
			}
			costs = append(costs, row)
		}
		path, _ := viterbi.Decode(costs, s.switchCost, nil, DefaultMinDwell, viterbi.NoStart)
		slot := func(t int) int {
			if s.win.Slots != nil {
				return s.win.Slots[seq[t]]
			}
			return t
		}
		// The home of every week and the regimes the site leaves it for.
		type siteWeek struct {
			start, end, home int
			away             map[int]bool
		}
		var weeks []siteWeek
		for t := 0; t < len(path); {
			b, end := slot(t)/week, t
			clear(votes)
			for end < len(path) && slot(end)/week == b {
				votes[path[end]]++
				end++
			}
			w := siteWeek{start: t, end: end, home: slices.Index(votes, slices.Max(votes)), away: map[int]bool{}} // the lowest home on a tie
			for _, r := range path[t:end] {
				if r != w.home {
					w.away[r] = true
				}
			}
			weeks = append(weeks, w)
			t = end
		}
		recurs := func(w int) bool {
			for r := range weeks[w].away {
				for _, v := range []int{w - 1, w + 1} {
					if v >= 0 && v < len(weeks) && weeks[v].home == weeks[w].home && weeks[v].away[r] {
						return true
					}
				}
			}
			return false
		}
		label := slices.Clone(path)
		for w, wk := range weeks {
			if recurs(w) {
				for u := wk.start; u < wk.end; u++ {
					label[u] = wk.home
				}
			}
		}
		start := 0
		for t := 1; t <= len(label); t++ {
			if t < len(label) && label[t] == label[start] {
				continue
			}
			if t-start >= s.win.MinRun || start == 0 && t == len(label) {
				out = append(out, segment{regime: label[start], rows: seq[start:t]})
			}
			start = t
		}
	}
	return out
}

// centroid returns the weighted mean codebook vector of the units of tree
// node p (a unit, or U+s for the cluster of merge s) and their weight; the
// plain mean when they weigh nothing.
func (s *splitter) centroid(p int) ([]float64, float64) {
	c := make([]float64, s.m.Dim)
	var weight, count float64
	s.eachUnit(p, func(unit int) {
		weight += s.w[unit]
		count++
	})
	s.eachUnit(p, func(unit int) {
		f := 1 / count
		if weight > 0 {
			f = s.w[unit] / weight
		}
		for j, v := range s.m.Vector(unit) {
			c[j] += f * v
		}
	})
	return c, weight
}

// eachUnit calls fn for every unit under tree node p.
func (s *splitter) eachUnit(p int, fn func(int)) {
	stack := []int{p}
	u := s.m.Units()
	for len(stack) > 0 {
		q := stack[len(stack)-1]
		stack = stack[:len(stack)-1]
		if q < u {
			fn(q)
			continue
		}
		mg := s.tree[q-u]
		stack = append(stack, mg.b, mg.a)
	}
}

// cutGain is mixtureGain's test of two modes re-run on the split that
// would be made: the two normals are not fitted freely but are the two
// groups into which the split cuts the projections x (second marks the
// second group's: the segments decoded in it when the sites are decoded
// with the two groups in place of the regime), each normal's mean and variance (or a common variance)
// and weight estimated from its group's members; the better of the two
// models is compared with one normal by the BIC, each at its best power,
// and two reports whether its density has two modes. G-means tests the
// projection of the very split it makes (Hamerly and Elkan 2003), so a
// split is supported only when the modes the test sees are its own two
// groups: two modes made by a few far segments inside one group, while
// the cut carves the bulk's tail off into the other, are no evidence for
// that cut. The mixture's parameters are the labelled estimates, as the
// classification approach to clustering estimates them (A. J. Scott and
// M. J. Symons, "Clustering methods based on likelihood ratio criteria",
// Biometrics 27, 1971; from memory), but its likelihood is the
// mixture's, so with EM's fit at its maximum it cannot exceed
// mixtureGain's. With a group empty, or a sample without spread, the gain
// is −Inf and two false.
func cutGain(x []float64, second []bool) (gain float64, two bool) {
	label := make([]float64, len(x)) // the second normal's responsibilities
	for i, b := range second {
		if b {
			label[i] = 1
		}
	}
	fit := func(common bool) func([]float64) (density, bool) {
		return func(z []float64) (density, bool) {
			f, ok := mStep(z, label, common)
			if ok {
				f.ll = eStep(z, f, make([]float64, len(z)))
			}
			return f, ok
		}
	}
	return powerGain(x, fit(true), fit(false))
}

func dot(a, b []float64) float64 {
	var s float64
	for i, v := range a {
		s += v * b[i]
	}
	return s
}

// String says in words how K was reached, for people: the number given,
// or the number chosen with its runner-up and how close it came.
func (c *Choice) String() string {
	if c.Given && c.Kept {
		return fmt.Sprintf("%d %s, kept from the model updated", c.K, plural(c.K, "regime", "regimes"))
	}
	if c.Given {
		return fmt.Sprintf("%d %s, as set", c.K, plural(c.K, "regime", "regimes"))
	}
	s := fmt.Sprintf("%d %s found", c.K, plural(c.K, "regime", "regimes"))
	if c.RunnerUp == 0 {
		return s + "; no other number could be tested"
	}
	verb := "undoes"
	if c.RunnerUp > c.K {
		verb = "makes"
	}
	s += fmt.Sprintf("; runner-up %d: the split that %s it tested p = %.2g with a BIC gain of %.1f for two modes, and a split is made below p = %g with a positive gain", c.RunnerUp, verb, c.RunnerUpP, c.RunnerUpGain, c.Alpha)
	if c.Marginal {
		return s + ", so the choice is marginal"
	}
	return s + ", a clear choice"
}

func plural(n int, one, many string) string {
	if n == 1 {
		return one
	}
	return many
}
