package scenarios

import (
	"math"
	"math/rand/v2"
	"slices"
	"time"
)

const (
	switchShare = 0.13    // share of sites that switch regime, unless a scenario says otherwise
	twiceShare  = 1.0 / 3 // share of the switching sites that switch twice
	minDwell    = 3       // windows of each regime around a switch
)

// plan is the fleet-wide draw of true regimes, switches and outage sites.
type plan struct {
	regimes  [][]int           // by site, then window
	switches [][]Switch        // by site; Site, Time and Onset are filled in later
	shifts   [][]time.Duration // by site and switch: Onset less Time
	outage   []bool            // site has an outage
	absent   []int             // channel a site never sends, or -1
}

// planRegimes draws each site's starting regime, picks the sites that switch
// and when, and the sites with an outage or a missing sensor.
func planRegimes(n int, g grid, sc *scenario, rates defectRates, rng *rand.Rand) plan {
	windows := g.windows
	p := plan{
		regimes:  make([][]int, n),
		switches: make([][]Switch, n),
		shifts:   make([][]time.Duration, n),
		outage:   make([]bool, n),
		absent:   make([]int, n),
	}
	var first []int
	if sc.quota {
		first = quotas(sc.shares, n, rng)
	}
	for i := range n {
		var r int
		if sc.quota {
			r = first[i]
		} else {
			r = pick(sc.shares, rng)
		}
		p.regimes[i] = make([]int, windows)
		for w := range windows {
			p.regimes[i][w] = r
		}
	}

	maxSwitches := 0
	switch {
	case windows >= 3*minDwell:
		maxSwitches = 2
	case windows >= 2*minDwell:
		maxSwitches = 1
	}
	movers := 0
	if maxSwitches > 0 && slices.ContainsFunc(sc.next, func(to []int) bool { return len(to) > 0 }) {
		movers = int(math.Round(sc.switching() * float64(n)))
	}
	twice := 0
	if maxSwitches == 2 {
		twice = int(math.Round(twiceShare * float64(movers)))
	}
	for j, i := range rng.Perm(n)[:movers] {
		var at []int
		if j < twice {
			// The first switch leaves room for two dwells after it.
			w1 := minDwell + rng.IntN(windows-3*minDwell+1)
			w2 := w1 + minDwell + rng.IntN(windows-minDwell-(w1+minDwell)+1)
			at = []int{w1, w2}
		} else {
			at = []int{minDwell + rng.IntN(windows-2*minDwell+1)}
		}
		for _, w := range at {
			from := p.regimes[i][w-1]
			if len(sc.next[from]) == 0 {
				break // a regime nothing follows
			}
			to := sc.next[from][rng.IntN(len(sc.next[from]))]
			for k := w; k < windows; k++ {
				p.regimes[i][k] = to
			}
			p.switches[i] = append(p.switches[i], Switch{Window: w, From: from, To: to})
			var shift time.Duration
			if sc.midday > 0 {
				// Whole steps strictly inside (−midday, midday), so that the
				// window keeps the regime that held for most of it.
				steps := int((sc.midday - 1) / g.step)
				shift = time.Duration(rng.IntN(2*steps+1)-steps) * g.step
			}
			p.shifts[i] = append(p.shifts[i], shift)
		}
	}

	outages := int(math.Round(rates.outageShare * float64(n)))
	for _, i := range rng.Perm(n)[:outages] {
		p.outage[i] = true
	}
	for i := range p.absent {
		p.absent[i] = -1
	}
	if len(sc.absent) > 0 {
		lacking := int(math.Round(sc.absentShare * float64(n)))
		for _, i := range rng.Perm(n)[:lacking] {
			p.absent[i] = sc.absent[rng.IntN(len(sc.absent))]
		}
	}
	return p
}

// quotas returns n starting regimes in the proportions of shares, rounded
// by the largest remainder, in random order.
func quotas(shares []float64, n int, rng *rand.Rand) []int {
	total := 0.0
	for _, s := range shares {
		total += s
	}
	counts := make([]int, len(shares))
	rest := make([]float64, len(shares))
	left := n
	for r, s := range shares {
		exact := s / total * float64(n)
		counts[r] = int(exact)
		rest[r] = exact - float64(counts[r])
		left -= counts[r]
	}
	for range left {
		best := 0
		for r := range rest {
			if rest[r] > rest[best] {
				best = r
			}
		}
		counts[best]++
		rest[best] = -1
	}
	out := make([]int, 0, n)
	for r, c := range counts {
		for range c {
			out = append(out, r)
		}
	}
	rng.Shuffle(n, func(i, j int) { out[i], out[j] = out[j], out[i] })
	return out
}

// pick draws an index with probability proportional to its weight.
func pick(weights []float64, rng *rand.Rand) int {
	total := 0.0
	for _, w := range weights {
		total += w
	}
	u := rng.Float64() * total
	for i, w := range weights {
		if u < w {
			return i
		}
		u -= w
	}
	return len(weights) - 1
}
