package timeline

// A regime is a state that a site holds relative to the fleet around it.
// Weather, a storm, a heat wave or a holiday moves many sites at once, and
// can carry their windows nearer to another regime for a few days; decoded
// against the regimes alone, every site would switch there and back. Like
// peer group analysis (R. J. Bolton and D. J. Hand, "Unsupervised profiling
// methods for fraud detection", Credit Scoring and Credit Control VII,
// 2001), which judges an account against its peers at the same time, the
// timelines judge a window against what the other sites of its regime show
// on the same day: when most sites whose home is regime a show regime b at
// one window time, significantly more often than a's sites show b at other
// times, a window at that time in regime a is measured against b's
// centroid. One site's switch does not move most of its regime's sites, so
// it stays a switch; a change that most sites of a regime make together is
// read as a shared condition, not as switches.

// learnShared returns, for each window time (slot) at which some regime
// has a partner other than itself, the partner of every regime (indices
// below k), learnt from the nearest regimes of the windows of seqs by the
// home regime of their site (the nearest regime of most of its windows);
// nil when there is none.
func learnShared(seqs []siteSeq, k int) map[slot][]int {
	counts := map[slot][]int{} // [home*k+regime]
	home := make([]int, k)
	near := []int{}
	for _, q := range seqs {
		clear(home)
		near = near[:0]
		for _, row := range q.costs {
			near = append(near, nearest(row))
			home[near[len(near)-1]]++
		}
		h := mostOf(home)
		for j, r := range near {
			at := slot{q.weeks[j], q.phases[j]}
			c, ok := counts[at]
			if !ok {
				c = make([]int, k*k)
				counts[at] = c
			}
			c[h*k+r]++
		}
	}
	return partners(counts, k)
}
