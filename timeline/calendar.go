package timeline

import (
	"time"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/stat/distuv"

	"github.com/kinmap/kinmap/internal/viterbi"
)

// A site that runs to a weekly calendar (an office building idle at the
// weekend, a workplace charger unused on Sundays) shows, at some times of
// the week, windows that resemble another regime: the office's weekend
// looks like a residential weekday. Decoded against the regimes alone,
// every weekend becomes two switches. The calendar learns, from a first
// decoding of all sites, which regime each regime's windows resemble at
// each time of the week, and the second decoding compares a window in
// regime a with the regime a's own sites show at that time of the week:
// the weekly cycle becomes part of the regime. This is the seasonal naive
// idea (R. J. Hyndman and G. Athanasopoulos, "Forecasting: Principles and
// Practice", 3rd ed., 2021, section 5.2): a value is compared with the
// same season of the cycle, not with the last value.
//
// The rule is a majority, with no threshold to set: a site-week whose
// windows are mostly in regime a is a week of a; the partner of a at a
// time of the week is the regime most of a's weeks show at that time,
// a itself unless another regime shows strictly more often. A switch
// between two regimes shows in at most one week of a site, a calendar in
// every week, so a switch does not make a partner unless most weeks of
// the regime hold it at the same time of the week, which is a cycle.

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

// calendar maps a phase of the week to the partner of each regime (by
// index) at that phase; a phase it lacks has every regime its own partner.
type calendar map[int64][]int

// learnCalendar counts, over the site-weeks of the decoded paths, which
// regime each regime's weeks show at each phase, and returns the partners
// that differ from the regime itself; nil when there is no weekly cycle.
// Regimes are indices below k.
func learnCalendar(seqs []siteSeq, k int) calendar {
	all := map[int64]bool{}
	for _, q := range seqs {
		for _, p := range q.phases {
			all[p] = true
		}
	}
	if len(all) < 2 {
		return nil // one window a week: no cycle within the week to see
	}
	type slot struct{ week, phase int64 }
	counts := map[slot][]int{} // k×k counts of windows, [home*k+regime]
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
	// The share of a's week-votes that go to each regime, over all phases:
	// what a phase shows when the time of the week does not matter.
	share := make([]float64, k*k)
	for _, v := range votes {
		for i, n := range v {
			share[i] += float64(n)
		}
	}
	for a := range k {
		if sum := floats.Sum(share[a*k : a*k+k]); sum > 0 {
			floats.Scale(1/sum, share[a*k:a*k+k])
		}
	}
	var cal calendar
	for p, v := range votes {
		for a := range k {
			b := mostOf(v[a*k : a*k+k])
			if v[a*k+b] <= v[a*k+a] {
				continue // not in most weeks
			}
			weeks := 0
			for _, n := range v[a*k : a*k+k] {
				weeks += n
			}
			chance := distuv.Binomial{N: float64(weeks), P: share[a*k+b]}
			if chance.Survival(float64(v[a*k+b]-1)) >= calendarLevel {
				continue // as likely on any day of the week
			}
			if cal[p] == nil {
				if cal == nil {
					cal = calendar{}
				}
				cal[p] = make([]int, k)
				for i := range cal[p] {
					cal[p][i] = i
				}
			}
			cal[p][a] = b
		}
	}
	return cal
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

// apply returns the costs of a site's windows with the cost of regime a
// at a phase where a's partner is b replaced by the cost of b.
func (cal calendar) apply(costs [][]float64, phases []int64) [][]float64 {
	out := make([][]float64, len(costs))
	for j, row := range costs {
		partner, ok := cal[phases[j]]
		if !ok {
			out[j] = row
			continue
		}
		out[j] = make([]float64, len(row))
		for a, b := range partner {
			out[j][a] = row[b]
		}
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
