package mapper

import (
	"math"
	"slices"
	"testing"

	"gonum.org/v1/gonum/mat"

	"github.com/kinmap/kinmap/lattice"
)

// fleetSpec describes an invented fleet of sites observed daily: each site
// holds a state (a centre in feature space) that may change, has its own
// constant offset, and every window also carries the fleet's shared
// weather (an AR(1) process over the days, the same for every site) and
// noise of its own.
type fleetSpec struct {
	sites, days int
	centres     [][]float64
	state       func(site, day int) int
	siteSD      float64 // spread of the site offsets
	weatherSD   float64 // stationary spread of the shared weather, along every feature
	noiseSD     float64
}

// fleet draws the windows of spec: the scaled rows, each site's rows in
// time order, and the true state of every row.
func (spec fleetSpec) fleet(seed uint64) (*mat.Dense, [][]int, []int) {
	rng := testRand(seed)
	d := len(spec.centres[0])
	weather := make([]float64, spec.days)
	const phi = 0.8 // day-to-day persistence of the weather
	w := rng.NormFloat64() * spec.weatherSD
	for t := range weather {
		weather[t] = w
		w = phi*w + math.Sqrt(1-phi*phi)*spec.weatherSD*rng.NormFloat64()
	}
	x := mat.NewDense(spec.sites*spec.days, d, nil)
	seqs := make([][]int, spec.sites)
	truth := make([]int, spec.sites*spec.days)
	for s := range spec.sites {
		offset := make([]float64, d)
		for j := range offset {
			offset[j] = spec.siteSD * rng.NormFloat64()
		}
		for t := range spec.days {
			i := s*spec.days + t
			k := spec.state(s, t)
			truth[i] = k
			seqs[s] = append(seqs[s], i)
			for j := range d {
				x.Set(i, j, spec.centres[k][j]+offset[j]+weather[t]+spec.noiseSD*rng.NormFloat64())
			}
		}
	}
	return x, seqs, truth
}

// findFleetRegimes trains a small map on the fleet and finds its regimes
// with k = 0, returning the regime of every window (its BMU's group).
func findFleetRegimes(t *testing.T, x *mat.Dense, seqs [][]int) ([]int, *Choice) {
	t.Helper()
	m, _, err := Train(x, Config{Cols: 12, Rows: 10, Hex: true, Epochs: 12})
	if err != nil {
		t.Fatal(err)
	}
	asg := m.Assign(x, 1)
	groups, ch, err := FindRegimes(m, 0, &Windows{X: x, Assignments: asg, Timelines: Timelines{Sequences: seqs, MinRun: 7}})
	if err != nil {
		t.Fatal(err)
	}
	out := make([]int, len(asg))
	for i, a := range asg {
		out[i] = groups[a.BMU]
	}
	return out, ch
}

// purity is the share of items whose found group is the most common found
// group of their true group, and the number of distinct found groups that
// are the most common of some true group.
func purity(truth, found []int) (float64, int) {
	count := map[[2]int]int{}
	for i := range truth {
		count[[2]int{truth[i], found[i]}]++
	}
	best := map[int][2]int{} // true group → found group, count
	for tf, n := range count {
		if b, ok := best[tf[0]]; !ok || n > b[1] || n == b[1] && tf[1] < b[0] {
			best[tf[0]] = [2]int{tf[1], n}
		}
	}
	hit := 0
	distinct := map[int]bool{}
	for _, b := range best {
		hit += b[1]
		distinct[b[0]] = true
	}
	return float64(hit) / float64(len(truth)), len(distinct)
}

// A fleet in one state, however strongly the shared weather moves it from
// day to day and however much its sites differ, is one regime: the
// weather averages out within every site's segment, and the site offsets
// are one normal mode.
func TestFindRegimesHomogeneousFleet(t *testing.T) {
	for _, seed := range []uint64{1, 2} {
		spec := fleetSpec{
			sites: 80, days: 28,
			centres: [][]float64{{0, 0, 0, 0}},
			state:   func(int, int) int { return 0 },
			siteSD:  0.5, weatherSD: 1.5, noiseSD: 0.3,
		}
		x, seqs, _ := spec.fleet(seed)
		found, ch := findFleetRegimes(t, x, seqs)
		if ch.K != 1 || found[0] != 0 {
			t.Errorf("seed %d: %d regimes (%+v), want 1", seed, ch.K, ch.Splits)
		}
	}
}

// A weekly cycle that every site goes through (five working days in one
// state, a weekend in another) is one regime: the tested segments span a
// week, over which the cycle averages out.
func TestFindRegimesWeeklyCycle(t *testing.T) {
	for _, seed := range []uint64{5, 6} {
		spec := fleetSpec{
			sites: 80, days: 28,
			centres: [][]float64{{0, 0, 0, 0}, {3, -3, 0, 2}},
			state: func(_, day int) int {
				if day%7 >= 5 {
					return 1
				}
				return 0
			},
			siteSD: 0.5, weatherSD: 0.5, noiseSD: 0.3,
		}
		x, seqs, _ := spec.fleet(seed)
		_, ch := findFleetRegimes(t, x, seqs)
		if ch.K != 1 {
			t.Errorf("seed %d: %d regimes (%+v), want 1", seed, ch.K, ch.Splits)
		}
	}
}

// Persistent states are found whatever the weather, a rare one included:
// 4 of 100 sites (4 % of the windows) hold a distant state, 60 a diffuse
// one, the rest a third, and 10 sites switch once from the diffuse state
// to the third.
func TestFindRegimesPersistentStates(t *testing.T) {
	for _, seed := range []uint64{3, 4} {
		spec := fleetSpec{
			sites: 100, days: 28,
			centres: [][]float64{{0, 0, 0, 0}, {4, 0, 3, 0}, {0, -6, 0, 6}},
			state: func(s, day int) int {
				switch {
				case s < 4:
					return 2
				case s < 14 && day >= 7+s:
					return 1
				case s < 64:
					return 0
				}
				return 1
			},
			siteSD: 0.6, weatherSD: 0.8, noiseSD: 0.4,
		}
		x, seqs, truth := spec.fleet(seed)
		found, ch := findFleetRegimes(t, x, seqs)
		p, distinct := purity(truth, found)
		if ch.K != 3 || distinct != 3 || p < 0.9 {
			t.Errorf("seed %d: %d regimes, %d distinct for the 3 states, purity %.3f (%+v); want 3, 3, ≥ 0.9", seed, ch.K, distinct, p, ch.Splits)
		}
		// Each split made was significant; the one turned down was not.
		for _, sp := range ch.Splits {
			if sp.Made != (sp.P < Alpha) {
				t.Errorf("seed %d: split to %d with p %g made %v", seed, sp.K, sp.P, sp.Made)
			}
		}
	}
}

// The runner-up is the number whose deciding test lies closest to going
// the other way: the p-value in decades from Alpha, the BIC gain in units
// of bicBand; within one band it is marginal.
func TestChoiceRunnerUp(t *testing.T) {
	tests := []struct {
		splits   []Split
		runnerUp int
		marginal bool
	}{
		// The split to 3 was turned down at p = 3e-4, 0.48 decades from
		// Alpha; the one to 2 was made 16 decades below it.
		{[]Split{{K: 2, Segments: 50, P: 1e-20, Gain: 100, Bimodal: true, CutGain: 90, CutBimodal: true, Made: true}, {K: 3, Segments: 40, P: 3e-4}}, 3, true},
		// The split to 3 was made at 5e-5, 0.3 decades below Alpha; the
		// one to 4 was turned down 3.5 decades above it.
		{[]Split{{K: 2, Segments: 50, P: 1e-20, Gain: 100, Bimodal: true, CutGain: 90, CutBimodal: true, Made: true}, {K: 3, Segments: 40, P: 5e-5, Gain: 50, Bimodal: true, CutGain: 40, CutBimodal: true, Made: true}, {K: 4, Segments: 30, P: 0.3}}, 2, true},
		// Nothing close: the runner-up is the split turned down at 0.2.
		{[]Split{{K: 2, Segments: 50, P: 1e-30, Gain: 100, Bimodal: true, CutGain: 90, CutBimodal: true, Made: true}, {K: 3, Segments: 40, P: 0.2}}, 3, false},
		// An untested split (too few segments) is no runner-up.
		{[]Split{{K: 2, Segments: 0, P: 1}}, 0, false},
		// The split to 3 passed the normality test far below Alpha but
		// its BIC gain was 1 short of 0 (half a band): marginal.
		{[]Split{{K: 2, Segments: 50, P: 1e-30, Gain: 100, Bimodal: true, CutGain: 90, CutBimodal: true, Made: true}, {K: 3, Segments: 40, P: 1e-12, Gain: -1, Bimodal: true}}, 3, true},
		// The split to 2 was made with a gain of 1 (half a band), however
		// small its p-value: marginal, the runner-up undoes it.
		{[]Split{{K: 2, Segments: 50, P: 1e-30, Gain: 1, Bimodal: true, CutGain: 1, CutBimodal: true, Made: true}, {K: 3, Segments: 40, P: 0.3}}, 1, true},
		// A split turned down because the fitted mixture has one mode is
		// never close; the runner-up undoes the split made.
		{[]Split{{K: 2, Segments: 50, P: 1e-30, Gain: 100, Bimodal: true, CutGain: 90, CutBimodal: true, Made: true}, {K: 3, Segments: 40, P: 1e-12, Gain: -0.5}}, 1, false},
		// The split to 3 passed both free tests, but the mixture of its
		// own two groups fell 1 short: marginal, at the cut's gain.
		{[]Split{{K: 2, Segments: 50, P: 1e-30, Gain: 100, Bimodal: true, CutGain: 90, CutBimodal: true, Made: true}, {K: 3, Segments: 40, P: 1e-12, Gain: 20, Bimodal: true, CutGain: -1, CutBimodal: true}}, 3, true},
		// The same with its own groups giving one mode: never close.
		{[]Split{{K: 2, Segments: 50, P: 1e-30, Gain: 100, Bimodal: true, CutGain: 90, CutBimodal: true, Made: true}, {K: 3, Segments: 40, P: 1e-12, Gain: 20, Bimodal: true, CutGain: 5}}, 1, false},
		// A split made with a large free gain but a cut gain of 1 (half
		// a band): marginal, the runner-up undoes it.
		{[]Split{{K: 2, Segments: 50, P: 1e-30, Gain: 100, Bimodal: true, CutGain: 1, CutBimodal: true, Made: true}, {K: 3, Segments: 40, P: 0.3}}, 1, true},
	}
	for i, tt := range tests {
		ch := &Choice{Alpha: Alpha, Splits: tt.splits}
		ch.runnerUp()
		if ch.RunnerUp != tt.runnerUp || ch.Marginal != tt.marginal {
			t.Errorf("case %d: runner-up %d, marginal %v; want %d, %v", i, ch.RunnerUp, ch.Marginal, tt.runnerUp, tt.marginal)
		}
	}
}

// A week whose departures recur in the next or previous week is read
// whole, in its home regime; a departure seen once keeps its own segment.
// Invented daily values, one feature: regime 0 at 0, regime 1 at 10.
func TestSegmentsRecurringWeeks(t *testing.T) {
	var vals []float64
	var seqs [][]int
	site := func(day func(d int) float64) {
		var seq []int
		for d := range 21 {
			seq = append(seq, len(vals))
			vals = append(vals, day(d))
		}
		seqs = append(seqs, seq)
	}
	// An office: every weekend (days 5 and 6 of each week) in regime 1.
	site(func(d int) float64 {
		if d%7 >= 5 {
			return 10
		}
		return 0
	})
	// A site that moves to regime 1 on day 10 and stays.
	site(func(d int) float64 {
		if d >= 10 {
			return 10
		}
		return 0
	})
	s := &splitter{
		win:        &Windows{X: mat.NewDense(len(vals), 1, vals), Timelines: Timelines{Sequences: seqs, MinRun: 7}},
		switchCost: 1,
	}
	type seg struct{ regime, first, n int }
	var got []seg
	for _, sg := range s.segments([][]float64{{0}, {10}}) {
		got = append(got, seg{sg.regime, sg.rows[0], len(sg.rows)})
	}
	want := []seg{{0, 0, 21}, {0, 21, 10}, {1, 31, 11}}
	if !slices.Equal(got, want) {
		t.Errorf("segments (regime, first row, windows) %v, want %v", got, want)
	}
}

// A split is made only when the two modes its test finds are the two
// groups it makes. Invented daily values, one feature, three weeks: 40
// sites hold one state, each at its own level (normal, spread 1), and two
// sites hold another far above them (10 and 12). Units stand for the
// lower tail of the 40 (−1.2), their upper half (0.6) and the two far
// sites (11). When the tree joins the far sites to the upper half first, as a
// lattice can make Ward's criterion do when their units lie among the
// upper half's, the top split cuts the lower tail off the rest: the
// segment means are not normal and have two modes, but the two far sites
// sit inside one group, so the split is not made. When the tree joins
// the two halves first, the same segments support the split that cuts
// the far sites off.
func TestSplitMatchesItsModes(t *testing.T) {
	rng := testRand(11)
	var vals []float64
	var seqs [][]int
	site := func(level float64) {
		var seq []int
		for range 21 {
			seq = append(seq, len(vals))
			vals = append(vals, level+0.3*rng.NormFloat64())
		}
		seqs = append(seqs, seq)
	}
	for range 40 {
		site(rng.NormFloat64())
	}
	site(10)
	site(11)
	site(12)
	units := []float64{-1.2, 0.6, 11}
	m := &Map{Lattice: lattice.Lattice{Cols: 3, Rows: 1, Flat: true}, Dim: 1, Codebook: units}
	w := make([]float64, len(units)) // the windows each unit wins
	asg := make([]Assignment, len(vals))
	for i, v := range vals {
		for u, c := range units {
			if math.Abs(v-c) < math.Abs(v-units[asg[i].BMU]) {
				asg[i].BMU = u
			}
		}
		w[asg[i].BMU]++
	}
	win := &Windows{X: mat.NewDense(len(vals), 1, vals), Assignments: asg, Timelines: Timelines{Sequences: seqs, MinRun: 7}}
	tests := []struct {
		name string
		tree []merge // node 3 first, then the root, node 4
		k    int
	}{
		{"far sites inside the upper group", []merge{{a: 1, b: 2}, {a: 3, b: 0}}, 1},
		{"far sites cut off", []merge{{a: 0, b: 1}, {a: 3, b: 2}}, 2},
	}
	for _, tt := range tests {
		s := &splitter{m: m, w: w, tree: tt.tree, win: win, switchCost: 1}
		_, ch, err := s.run(0)
		if err != nil {
			t.Fatal(err)
		}
		top := ch.Splits[0]
		// Without the test of the split's own groups, the top split
		// would be made either way.
		if !(top.P < Alpha && top.Gain > 0 && top.Bimodal) {
			t.Errorf("%s: the top split tested p = %g, gain %.2f, bimodal %v; want it to pass the free tests", tt.name, top.P, top.Gain, top.Bimodal)
		}
		if ch.K != tt.k {
			t.Errorf("%s: %d regimes (%+v), want %d", tt.name, ch.K, ch.Splits, tt.k)
		}
	}
}
