package score

import (
	"maps"
	"slices"
	"time"
)

// Window is the regime of one site's window, named by its start.
type Window struct {
	Site   string
	Start  time.Time
	Regime string
}

// Measures are the scores of one labelling of the windows.
type Measures struct {
	ARI      float64 `json:"ari"`      // adjusted Rand index of the regimes of all scored windows
	AMI      float64 `json:"ami"`      // adjusted mutual information, same windows
	Covering float64 `json:"covering"` // segment covering per site, averaged weighted by its scored windows
	Switches Match   `json:"switches"` // switches matched within the tolerance
}

// Report is the agreement of found regimes and switches with the truth.
type Report struct {
	Tolerance time.Duration `json:"tolerance_ns"` // of the switch matching

	TruthWindows int `json:"truth_windows"`   // windows in the truth
	Scored       int `json:"scored_windows"`  // windows in both the truth and the output: those ARI, AMI and Covering count
	Missing      int `json:"missing_windows"` // truth windows the output lacks, such as windows skipped for low coverage
	Extra        int `json:"extra_windows"`   // output windows the truth lacks
	Sites        int `json:"sites"`           // sites with a scored window

	TrueRegimes   int `json:"true_regimes"`  // regimes among the scored windows, in the truth
	FoundRegimes  int `json:"found_regimes"` // and in the output
	TrueSwitches  int `json:"true_switches"`
	FoundSwitches int `json:"found_switches"`

	Found Measures `json:"found"` // of the output

	// Baseline is what predicting no switch at all scores: every site
	// held, in all its scored windows, in the true regime it spends most
	// of them in (on a tie, the regime whose name sorts first). Covering
	// does not depend on which label a site is held in; for ARI and AMI
	// the majority is the kindest plain choice. The baseline uses the
	// truth, so an output is worth its switches only where it scores
	// above it.
	Baseline Measures `json:"no_switch_baseline"`
}

// Compare scores found windows and switches against true ones. Windows are
// joined by site and start; a window of one side only is counted as
// Missing or Extra and left out of ARI, AMI and Covering. Switches are
// matched as by Switches, whether or not their windows were scored. The
// regime names of the two sides need not agree: only which windows share
// a regime counts. With no scored window, ARI, AMI and Covering are 1 as
// for empty labellings; Folder refuses that case. Compare panics when a
// side names a window twice.
func Compare(truth, found []Window, trueSwitches, foundSwitches []Event, tol time.Duration) Report {
	r := Report{
		Tolerance:     tol,
		TruthWindows:  len(truth),
		TrueSwitches:  len(trueSwitches),
		FoundSwitches: len(foundSwitches),
	}
	type key struct {
		site  string
		start int64
	}
	foundAt := make(map[key]string, len(found))
	for _, w := range found {
		k := key{w.Site, w.Start.UnixNano()}
		if _, dup := foundAt[k]; dup {
			panic("score: found window " + w.Site + " " + w.Start.Format(time.RFC3339) + " twice")
		}
		foundAt[k] = w.Regime
	}
	// The scored windows by site, in time order.
	var scored []Window // the truth's, with the found regime beside it
	var foundRegime []string
	seen := make(map[key]bool, len(truth))
	for _, w := range sortedWindows(truth) {
		k := key{w.Site, w.Start.UnixNano()}
		if seen[k] {
			panic("score: true window " + w.Site + " " + w.Start.Format(time.RFC3339) + " twice")
		}
		seen[k] = true
		f, ok := foundAt[k]
		if !ok {
			r.Missing++
			continue
		}
		scored = append(scored, w)
		foundRegime = append(foundRegime, f)
	}
	r.Scored = len(scored)
	r.Extra = len(found) - r.Scored

	trueLabels, trueNames := labelsOf(len(scored), func(i int) string { return scored[i].Regime })
	foundLabels, foundNames := labelsOf(len(scored), func(i int) string { return foundRegime[i] })
	r.TrueRegimes, r.FoundRegimes = trueNames, foundNames

	baseline := make([]int, len(scored))
	var foundCovered, baseCovered float64
	for lo := 0; lo < len(scored); {
		hi := lo + 1
		for hi < len(scored) && scored[hi].Site == scored[lo].Site {
			hi++
		}
		r.Sites++
		majority(trueLabels[lo:hi], baseline[lo:hi])
		foundCovered += coveredWindows(trueLabels[lo:hi], foundLabels[lo:hi])
		baseCovered += coveredWindows(trueLabels[lo:hi], baseline[lo:hi])
		lo = hi
	}
	r.Found = Measures{
		ARI:      ARI(trueLabels, foundLabels),
		AMI:      AMI(trueLabels, foundLabels),
		Covering: ratio(foundCovered, len(scored)),
		Switches: Switches(trueSwitches, foundSwitches, tol),
	}
	r.Baseline = Measures{
		ARI:      ARI(trueLabels, baseline),
		AMI:      AMI(trueLabels, baseline),
		Covering: ratio(baseCovered, len(scored)),
		Switches: Switches(trueSwitches, nil, tol),
	}
	return r
}

// sortedWindows returns a copy of ws sorted by site, then start.
func sortedWindows(ws []Window) []Window {
	return sortedBySite(ws, func(w Window) (string, time.Time) { return w.Site, w.Start })
}

// labelsOf numbers n names in the order the names sort and returns the
// numbers and how many names there are.
func labelsOf(n int, name func(int) string) ([]int, int) {
	index := map[string]int{}
	for i := range n {
		index[name(i)] = 0
	}
	names := slices.Sorted(maps.Keys(index))
	for l, s := range names {
		index[s] = l
	}
	labels := make([]int, n)
	for i := range labels {
		labels[i] = index[name(i)]
	}
	return labels, len(names)
}

// majority fills out with the most frequent label of labels, the lowest
// on a tie.
func majority(labels, out []int) {
	counts := map[int]int{}
	for _, l := range labels {
		counts[l]++
	}
	best := labels[0]
	for l, c := range counts {
		if c > counts[best] || c == counts[best] && l < best {
			best = l
		}
	}
	for i := range out {
		out[i] = best
	}
}
