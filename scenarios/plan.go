package scenarios

import (
	"math"
	"math/rand/v2"
)

const (
	switchShare = 0.13    // share of sites that switch regime
	twiceShare  = 1.0 / 3 // share of the switching sites that switch twice
	minDwell    = 3       // windows of each regime around a switch
)

// plan is the fleet-wide draw of true regimes, switches and outage sites.
type plan struct {
	regimes  [][]int    // by site, then window
	switches [][]Switch // by site; Site and Time are filled in later
	outage   []bool     // site has an outage
}

// planRegimes draws each site's starting regime, picks the sites that switch
// and when, and the sites with an outage.
func planRegimes(n, windows int, sc *scenario, rates defectRates, rng *rand.Rand) plan {
	p := plan{
		regimes:  make([][]int, n),
		switches: make([][]Switch, n),
		outage:   make([]bool, n),
	}
	for i := range n {
		r := pick(sc.shares, rng)
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
	if maxSwitches > 0 {
		movers = int(math.Round(switchShare * float64(n)))
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
			to := sc.next[from][rng.IntN(len(sc.next[from]))]
			for k := w; k < windows; k++ {
				p.regimes[i][k] = to
			}
			p.switches[i] = append(p.switches[i], Switch{Window: w, From: from, To: to})
		}
	}

	outages := int(math.Round(rates.outageShare * float64(n)))
	for _, i := range rng.Perm(n)[:outages] {
		p.outage[i] = true
	}
	return p
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
