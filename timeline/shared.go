package timeline

import (
	"cmp"
	"math"
	"slices"
	"time"

	"github.com/kinmap/kinmap/features"
)

// A regime is a state that a site holds relative to the fleet around it.
// Weather, a storm, a heat wave or a holiday moves many sites at once, and
// can carry their windows nearer to another regime for a few days; decoded
// against the regimes alone, every site would switch there and back. Like
// peer group analysis (R. J. Bolton and D. J. Hand, "Unsupervised profiling
// methods for fraud detection", Credit Scoring and Credit Control VII,
// 2001), which judges an account against its peers at the same time, the
// timelines judge a window against what the other sites of its regime show
// on the same day. When most sites whose home is regime a show regime b at
// one window time, significantly more often than a's sites show b at other
// times (see partners), a window at that time is measured in regime a
// against what a's sites show there: either a or b, in the shares of a's
// sites nearest each. One site's switch does not move most of its regime's
// sites, so it stays a switch; a change that most of a regime's sites make
// together is read as a shared condition, not as switches, and is reported
// as one (Shared).
//
// This is the emission of a hidden Markov model that, in regime a at that
// time, is a mixture of the emissions of a and b (a mixture emission, L. R.
// Rabiner, "A tutorial on hidden Markov models and selected applications
// in speech recognition", Proc. IEEE 77, 1989, section IV.D). The
// decoding's costs are negative log-likelihoods in units of a scale τ, so
// the cost of a window x in a there is
//
//	−τ · ln(w_a · exp(−d_a / τ) + w_b · exp(−d_b / τ))
//
// with w_a and w_b the shares of a's sites nearest a and b (of those
// nearest either) and d_a, d_b the costs of x in a and b. τ is the switch
// cost, the decoding's unit of evidence; the family's decodings do not
// change between τ of half and twice the switch cost. A window like b
// costs about d_b + τ·ln(1/w_b) in a: no more than in b when all of a's
// sites show b, one switch cost more when only 1/e of them do. Sites of a
// that are nearest a third regime at their usual rate are switches of
// their own and are left out of the shares.
//
// At such a time d_r, the cost of x in any regime r, is measured to where
// the windows nearest r lie there, not to r's centroid: the mean of those
// windows, the site's own left out, with the squared distance less the
// variance of that mean (Σ sᵢ²/nᵢ over the components, the usual
// correction that makes ‖x − mean‖² unbiased for the squared distance to
// the group's true location), so that a group of a few windows does not
// cost more than a large one for the uncertainty of its mean alone. A
// group of fewer than two other windows is taken at r's centroid. A storm
// can carry every window far off every centroid, and then the centroids
// tell the regimes apart no better than the storm's noise does (on the
// wind-turbine fleet, costs of 11.7 to 14.5 against 2 to 8 on other days):
// a site that switched on the storm's first day and kept its new regime
// had its switch dated after the storm. Where the windows of the new
// regime's sites lie that day still tells them from the others. This
// compares a window with the fleet of its own day, which is peer group
// analysis taken one step further; the mixture weights are unchanged.
//
// On the other days the same holds with peers chosen by their history, as
// Bolton and Hand choose them: regime r is measured where the windows of
// the sites whose home is r lie that day, of those nearest r. A season, a
// heat wave that moves every regime alike, or any drift of the whole fleet
// off the centroids that does not make one regime look like another, then
// no longer dilutes a site's evidence (the ends of the wind-turbine fleet's
// record, where the season has moved every site, had switches three
// windows from the edge favour their new regime by less than one switch
// cost). Both restrictions matter. Peers taken by the day's nearest regime
// alone are chosen by being near it, so a handful of them pulls a
// regime's location towards themselves and makes it cheap for the sites
// among them (on the air-handling fleet, sites held the weekend phase on
// weekdays); peers taken by their home alone mix a small regime's sites
// that are in it that day with those that are not (on the weather-mast
// fleet, an exposed site cost less in the iced regime than in its own for
// four days, and its real icing was lost).
//
// Measuring a against b's centroid alone (w_b = 1), as an earlier version
// did, made a and b cost the same there even when the condition carried
// only half of a's sites; a switch between a and b next to such a day
// could then be dated anywhere within it, and the decoding dated it at
// its end. On the wind-turbine fleet of the evaluation family, whose
// shared days move about half of the sites, that cost one true switch in
// 40 on one draw and three on the other.

// sharedSlots is what the fleet shows at each window time (see
// learnShared).
type sharedSlots struct {
	// mix[at][a][r] is the weight of regime r in the mixture of regime a
	// at slot at, for each regime a with a partner there; nil for the
	// other regimes.
	mix map[slot][][]float64
	// cells[at][r] sums the windows at slot at that are nearest regime
	// r (see dayCell): where some regime has a partner there, all of
	// them; elsewhere, those of the sites whose home is r.
	cells   map[slot][]dayCell
	changes []Shared
}

// dayCell is the sum of some windows at one slot: n windows, and the
// sum, sum of squares and count of each component over the windows where
// it is not NaN.
type dayCell struct {
	n               int
	sum, sq, counts []float64
}

// add adds the window x to c.
func (c *dayCell) add(x []float64) {
	if c.sum == nil {
		c.sum, c.sq, c.counts = make([]float64, len(x)), make([]float64, len(x)), make([]float64, len(x))
	}
	c.n++
	for i, v := range x {
		if !math.IsNaN(v) {
			c.sum[i] += v
			c.sq[i] += v * v
			c.counts[i]++
		}
	}
}

// distance is how far x lies from where the windows of c lie, leaving out
// x itself when own (x one of them): the square root of the unbiased
// estimate of the squared distance from x to their mean location,
// ‖x − m‖² less the variance of the mean m, Σ sᵢ²/nᵢ (sᵢ² the sample
// variance of component i over the nᵢ windows that have it), floored at
// 0. The correction keeps a group of a few windows, whose mean is itself
// uncertain, from costing more than a large one for that alone.
// Components where x is NaN are left out, and those that fewer than two
// windows have are measured to centre. It reports false when fewer than
// two windows are left: one other window is no location of a group.
func (c *dayCell) distance(x, centre []float64, own bool) (float64, bool) {
	n := c.n
	if own {
		n--
	}
	if n < 2 {
		return 0, false
	}
	var d2 float64
	for i, v := range x {
		if math.IsNaN(v) {
			continue
		}
		s, sq, m := c.sum[i], c.sq[i], c.counts[i]
		if own {
			s, sq, m = s-v, sq-v*v, m-1
		}
		if m < 2 {
			d := v - centre[i]
			d2 += d * d
			continue
		}
		mean := s / m
		variance := max(sq-s*mean, 0) / (m - 1)
		d := v - mean
		d2 += d*d - variance/m
	}
	return math.Sqrt(max(d2, 0)), true
}

// fleetDays is the nearest regimes of the windows of a fleet by window
// time (slot) and by the home regime of their site: the nearest regime of
// most of its windows.
type fleetDays struct {
	seqs   []siteSeq
	near   [][]int            // nearest regime of each window, as seqs
	homes  []int              // home regime of each site, as seqs
	counts map[slot][]int     // windows by slot, [home*k+nearest]
	times  map[slot]time.Time // start of the windows at each slot
	peers  map[slot][][]int   // [home]: the rows of ws at each slot, by their site's home regime
	k      int
}

// daysOf finds the nearest and home regimes of the windows of seqs, which
// index ws, among k regimes.
func daysOf(seqs []siteSeq, ws []features.Window, k int) fleetDays {
	f := fleetDays{seqs: seqs, near: make([][]int, len(seqs)), homes: make([]int, len(seqs)),
		counts: map[slot][]int{}, times: map[slot]time.Time{}, peers: map[slot][][]int{}, k: k}
	home := make([]int, k)
	for s, q := range seqs {
		clear(home)
		f.near[s] = make([]int, len(q.costs))
		for j, row := range q.costs {
			f.near[s][j] = nearest(row)
			home[f.near[s][j]]++
		}
		f.homes[s] = mostOf(home)
		for j, r := range f.near[s] {
			at := slot{q.weeks[j], q.phases[j]}
			c, ok := f.counts[at]
			if !ok {
				c = make([]int, k*k)
				f.counts[at] = c
				f.times[at] = ws[q.idx[j]].Start
				f.peers[at] = make([][]int, k)
			}
			c[f.homes[s]*k+r]++
			f.peers[at][f.homes[s]] = append(f.peers[at][f.homes[s]], q.idx[j])
		}
	}
	return f
}

// learnShared finds the slots at which some regime has a partner other
// than itself, by the test of partners on the fleet's windows f by their
// site's home regime, and returns the mixture of each such
// regime there, the windows of every slot by nearest regime (see
// sharedSlots.cells), and the shared conditions they make; ws are the
// windows the sequences index, sites the
// sequences' site names and ids the regime IDs. A condition that the
// weekly calendar of the same windows explains (see learnCalendar), such
// as an office's weekend, is decoded alike but not reported: it is the
// sites' week, not an event.
func learnShared(f fleetDays, ws []features.Window, sites []string, ids, report []int) sharedSlots {
	k, seqs := len(ids), f.seqs
	partner := partners(f.counts, k)
	out := sharedSlots{mix: map[slot][][]float64{}, cells: map[slot][]dayCell{}}
	for s, q := range seqs {
		for j, i := range q.idx {
			at, r := slot{q.weeks[j], q.phases[j]}, f.near[s][j]
			if partner[at] == nil && f.homes[s] != r {
				continue
			}
			c, ok := out.cells[at]
			if !ok {
				c = make([]dayCell, k)
				out.cells[at] = c
			}
			c[r].add(ws[i].Scaled)
		}
	}
	for at, p := range partner {
		c := f.counts[at]
		m := make([][]float64, k)
		for a := range k {
			if p[a] == a {
				continue
			}
			b := p[a]
			n := float64(c[a*k+a] + c[a*k+b])
			m[a] = make([]float64, k)
			m[a][a], m[a][b] = float64(c[a*k+a])/n, float64(c[a*k+b])/n
		}
		out.mix[at] = m
	}
	if len(partner) > 0 {
		out.changes = f.changes(partner, learnCalendar(seqs, k), sites, ids, report)
	}
	return out
}

// apply measures the windows of the site s of f against what the fleet
// shows at their slot (see above): each regime r is taken where the
// windows of cells nearest r lie there, the site's own window left out (a
// group of fewer than two other windows at r's centroid), and where a
// regime a has a partner b, a is the mixture of its own and b's there.
// ws are the windows, centroids the regimes' and tau the scale.
func (sh sharedSlots) apply(f fleetDays, s int, ws []features.Window, centroids [][]float64, tau float64) {
	q, k := &f.seqs[s], f.k
	day := make([]float64, k)
	for j, i := range q.idx {
		at := slot{q.weeks[j], q.phases[j]}
		m, cells := sh.mix[at], sh.cells[at]
		if cells == nil {
			continue // no window of the fleet at this slot is a peer
		}
		for r, c := range cells {
			// Outside shared days a window is in a cell only when
			// its site's home is that regime.
			own := f.near[s][j] == r && (m != nil || f.homes[s] == r)
			day[r] = q.costs[j][r]
			if d, ok := c.distance(ws[i].Scaled, centroids[r], own); ok {
				day[r] = d
			}
		}
		copy(q.costs[j], day)
		for a, w := range m {
			if w != nil {
				q.costs[j][a] = mixture(day, w, tau)
			}
		}
	}
}

// mixture is −tau·ln Σ_r w[r]·exp(−costs[r]/tau), computed from the least
// cost of a regime with a weight so that it neither overflows nor
// underflows.
func mixture(costs, w []float64, tau float64) float64 {
	lo := math.Inf(1)
	for r, v := range w {
		if v > 0 {
			lo = min(lo, costs[r])
		}
	}
	var z float64
	for r, v := range w {
		if v > 0 {
			z += v * math.Exp(-(costs[r]-lo)/tau)
		}
	}
	return lo - tau*math.Log(z)
}

// Shared is a condition that most sites of one regime showed together:
// from Start, their windows resembled regime Like, significantly more
// often than the regime's sites resemble it at other times (see Build).
// The decoding reads it as a condition of the fleet, not as switches, and
// keeps the sites in their regime. A storm or a holiday shows as a
// condition that ends; a change that most of the regime's sites make at
// once and keep (a firmware update, a new set point, a change in the data
// pipeline) as one that lasts to the last window.
type Shared struct {
	Start  time.Time // start of its first window
	End    time.Time // start of the first window after it; zero when it lasts to the last window
	Regime int       // ID of the regime whose sites showed it
	Like   int       // ID of the regime they resembled; a phase of it (model.Phase) reports as the regime
	Sites  []string  // the regime's sites whose windows resembled Like in most of their windows of it, sorted
	Of     int       // the regime's sites with a window in it
	// P is the greatest, over its window times, of the chance that the
	// regime's sites show Like there as often as they do if that time were
	// like the others (the test of partners, which is below 1 % at each).
	P float64
}

// Holds reports whether the switch s is part of the condition: a switch of
// one of its sites from its regime into the regime they looked like, while
// it lasted. Such a switch is the condition seen at one site, not a change
// of its own.
func (sh Shared) Holds(s Switch) bool {
	if s.From != sh.Regime || s.To != sh.Like || s.Time.Before(sh.Start) || !sh.End.IsZero() && !s.Time.Before(sh.End) {
		return false
	}
	return slices.Contains(sh.Sites, s.Site)
}

// changes returns the shared conditions of partner: for each regime a,
// each run of consecutive window times (in the order of all the times of
// the fleet) at which a's partner is the same other regime b, unless the
// weekly calendar gives a the partner b at every one of them.
func (f fleetDays) changes(partner map[slot][]int, weekly map[int64][]int, sites []string, ids, report []int) []Shared {
	k := f.k
	total := totals(f.counts, k)
	order := make([]slot, 0, len(f.times))
	for at := range f.times {
		order = append(order, at)
	}
	slices.SortFunc(order, func(x, y slot) int { return f.times[x].Compare(f.times[y]) })
	pos := make(map[slot]int, len(order))
	for i, at := range order {
		pos[at] = i
	}
	var out []Shared
	for a := range k {
		for from := 0; from < len(order); {
			p := partner[order[from]]
			if p == nil || p[a] == a {
				from++
				continue
			}
			b, to := p[a], from+1
			for to < len(order) && partner[order[to]] != nil && partner[order[to]][a] == b {
				to++
			}
			run := order[from:to]
			from = to
			if !slices.ContainsFunc(run, func(at slot) bool { w := weekly[at.phase]; return w == nil || w[a] != b }) {
				continue // the week's calendar
			}
			if report[a] == report[b] {
				continue // a regime and its own phase: no change of regime
			}
			sh := Shared{Start: f.times[run[0]], Regime: ids[report[a]], Like: ids[report[b]]}
			if to < len(order) {
				sh.End = f.times[order[to]]
			}
			for _, at := range run {
				sh.P = max(sh.P, chance(f.counts[at][a*k:a*k+k], total[a*k:a*k+k], b))
			}
			for s, q := range f.seqs {
				if f.homes[s] != a {
					continue
				}
				in, like := 0, 0
				for j := range q.costs {
					if i := pos[slot{q.weeks[j], q.phases[j]}]; i >= pos[run[0]] && i < to {
						in++
						if f.near[s][j] == b {
							like++
						}
					}
				}
				if in > 0 {
					sh.Of++
				}
				if 2*like > in {
					sh.Sites = append(sh.Sites, sites[s])
				}
			}
			out = append(out, sh)
		}
	}
	slices.SortFunc(out, func(x, y Shared) int {
		return cmp.Or(x.Start.Compare(y.Start), cmp.Compare(x.Regime, y.Regime))
	})
	return out
}
