package timeline

import (
	"time"

	"github.com/kinmap/kinmap/internal/binomial"
	"github.com/kinmap/kinmap/internal/viterbi"
)

// A site that runs to a weekly calendar (an office building idle at the
// weekend, a workplace charger unused on Sundays) shows, at some times of
// the week, windows that resemble another regime: the office's weekend
// looks like a residential weekday. Decoded against the regimes alone,
// every weekend becomes two switches. The calendar learns, from the nearest
// regime of every window, which regime each regime's windows resemble at
// each time of the week, and the decoding compares a window in regime a
// with the regime a's own sites show at that time of the week: the weekly
// cycle becomes part of the regime. This is the seasonal naive idea (R. J.
// Hyndman and G. Athanasopoulos, "Forecasting: Principles and Practice",
// 3rd ed., 2021, section 5.2): a value is compared with the same season of
// the cycle, not with the last value.
//
// A site-week whose windows are mostly nearest to regime a is a week of a;
// each week votes, at each time of the week, for the regime most of its
// windows there are nearest to. The partner of a at that time is the
// regime most of a's weeks vote for, when it beats a itself, is seen in at
// least two weeks, and is significantly more frequent there than at the
// other times (see partners). A switch between two regimes shows in at
// most one week of a site, a calendar in every week, so a switch does not
// make a partner.

// calendarLevel is the significance level of the one-sided exact binomial
// test that a time of the week shows a partner more often than the other
// times do: 1 %, a conventional level (common practice, no source).
const calendarLevel = 0.01

// weekPhase is where a window starts in its local week: the week (the
// day number of its Monday) and the offset of its wall-clock start from
// that Monday's midnight, in seconds. Wall-clock fields are used, so a
// change of daylight saving time does not move a phase.
func weekPhase(t time.Time, loc *time.Location) (week int64, phase int64) {
	t = t.In(loc)
	y, m, d := t.Date()
	dow := (int(t.Weekday()) + 6) % 7 // Monday 0
	monday := time.Date(y, m, d-dow, 0, 0, 0, 0, time.UTC)
	h, mi, s := t.Clock()
	return monday.Unix() / 86400, int64(dow)*86400 + int64(h)*3600 + int64(mi)*60 + int64(s)
}

// siteSeq is one site's windows in time order, as decoded.
type siteSeq struct {
	idx           []int // the windows, as rows of the table
	costs         [][]float64
	weeks, phases []int64 // of each window (see weekPhase)
	from          viterbi.Start
	initial       []float64
	path          []int
	total         float64
}

// slot is one window time: a week and a phase of it.
type slot struct{ week, phase int64 }

// weekCounts counts, for every slot, the windows of the sites' weeks by
// the week's home regime (the regime of a strict majority of the week's
// phases, by nearest centroid) and the window's own nearest regime:
// counts[slot][home*k+regime]. It also returns the number of phases seen.
func weekCounts(seqs []siteSeq, k int) (map[slot][]int, int) {
	all := map[int64]bool{}
	for _, q := range seqs {
		for _, p := range q.phases {
			all[p] = true
		}
	}
	counts := map[slot][]int{}
	home := make([]int, k)
	for _, q := range seqs {
		path := make([]int, len(q.costs))
		for j, row := range q.costs {
			path[j] = nearest(row)
		}
		for lo := 0; lo < len(path); {
			hi := lo
			for hi < len(path) && q.weeks[hi] == q.weeks[lo] {
				hi++
			}
			clear(home)
			for _, r := range path[lo:hi] {
				home[r]++
			}
			h := -1
			for r, c := range home {
				if 2*c > len(all) {
					h = r
				}
			}
			for j := lo; h >= 0 && j < hi; j++ {
				at := slot{q.weeks[j], q.phases[j]}
				c, ok := counts[at]
				if !ok {
					c = make([]int, k*k)
					counts[at] = c
				}
				c[h*k+path[j]]++
			}
			lo = hi
		}
	}
	return counts, len(all)
}

// learnCalendar returns, for each phase of the week (see weekPhase) where
// some regime has a partner other than itself, the partner of every regime
// (indices below k) there, learnt from the site-weeks of seqs by their
// nearest regimes; nil when there is no weekly cycle.
func learnCalendar(seqs []siteSeq, k int) map[int64][]int {
	counts, phases := weekCounts(seqs, k)
	if phases < 2 {
		return nil // one window a week: no cycle within the week to see
	}
	// Each week votes, at each phase and for each home regime, for the
	// regime most of that week's windows show there.
	votes := map[int64][]int{} // phase → k×k votes, [home*k+regime]
	for at, c := range counts {
		v, ok := votes[at.phase]
		if !ok {
			v = make([]int, k*k)
			votes[at.phase] = v
		}
		for a := range k {
			if b := mostOf(c[a*k : a*k+k]); c[a*k+b] > 0 {
				v[a*k+b]++
			}
		}
	}
	return partners(votes, k)
}

// partners returns, for every key of counts (k×k counts of one time,
// [home*k+regime]) where some home regime a's windows or weeks show
// another regime b, the partner of each regime there: b when b is shown
// more often than a itself, at least twice, and significantly more often
// than a shows b at the other times, by a one-sided exact binomial test at
// calendarLevel. Keys without a partner other than the regime itself are
// left out.
func partners[K comparable](counts map[K][]int, k int) map[K][]int {
	total := totals(counts, k)
	var out map[K][]int
	for key, c := range counts {
		for a := range k {
			row := c[a*k : a*k+k]
			b := mostOf(row)
			if row[b] <= row[a] || row[b] < 2 {
				continue // not most of them, or not repeated
			}
			if chance(row, total[a*k:a*k+k], b) >= calendarLevel {
				continue // as likely at any other time
			}
			if out[key] == nil {
				if out == nil {
					out = map[K][]int{}
				}
				out[key] = make([]int, k)
				for i := range out[key] {
					out[key][i] = i
				}
			}
			out[key][a] = b
		}
	}
	return out
}

// totals sums the k×k counts of every key of counts.
func totals[K comparable](counts map[K][]int, k int) []int {
	total := make([]int, k*k)
	for _, c := range counts {
		for i, n := range c {
			total[i] += n
		}
	}
	return total
}

// chance is the one-sided exact binomial tail of the test of partners:
// the probability that a home regime whose windows at one time are row
// (counts by regime) shows regime b there at least row[b] times, were it
// to show b at the rate it does at the other times, total being its counts
// over all times. The rate is taken by Laplace's rule of succession
// ((x+1)/(n+2), P.-S. Laplace, "Essai philosophique sur les
// probabilités", 1814), so that a regime never seen elsewhere is not a
// certainty.
func chance(row, total []int, b int) float64 {
	n, others := 0, 0
	for r, v := range row {
		n += v
		others += total[r] - v
	}
	rate := float64(total[b]-row[b]+1) / float64(others+2)
	return binomial.Tail(n, row[b], rate)
}

// mostOf is the index of the greatest of c, the first on a tie.
func mostOf(c []int) int {
	b := 0
	for i, v := range c {
		if v > c[b] {
			b = i
		}
	}
	return b
}

// substitute returns row with the cost of each regime a replaced by the
// cost of its partner (row itself when partner is nil).
func substitute(row []float64, partner []int) []float64 {
	if partner == nil {
		return row
	}
	out := make([]float64, len(row))
	for a, b := range partner {
		out[a] = row[b]
	}
	return out
}

// nearest is the index of the least of costs, the first on a tie.
func nearest(costs []float64) int {
	b := 0
	for k, c := range costs {
		if c < costs[b] {
			b = k
		}
	}
	return b
}
