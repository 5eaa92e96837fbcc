package events

import (
	"cmp"
	"slices"

	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/lattice"
	"github.com/kinmap/kinmap/model"
)

// What a window is classified as when no label wins.
const (
	// Unknown: the evidence is thin; the labels near the window disagree
	// or there are none.
	Unknown = "unknown"
	// Unlabelled: most windows near it were marked by no event.
	Unlabelled = "unlabelled"
)

// Config sets the classification.
type Config struct {
	// K is the least number of counted windows a vote takes: the rings of
	// units around a window's unit are added, nearest first, until they
	// hold K windows.
	K int
	// MinConfidence is the confidence below which a window is Unknown.
	MinConfidence float64
}

// DefaultConfig returns K 5, the default of scikit-learn's
// KNeighborsClassifier, and a minimum confidence of one half: the winner
// must be likelier than all the others together.
func DefaultConfig() Config { return Config{K: 5, MinConfidence: 0.5} }

// condition is a window's likely condition.
type condition struct {
	label      string  // a label, Unlabelled or Unknown
	confidence float64 // in [0, 1]; see Classify
	votes      int     // windows counted
}

// Classify sets the likely condition of every window of ws (its Condition
// and ConditionConfidence) from the knowledge c on the lattice l: the
// label counts of the ring of units at the window's unit, then of the
// rings ever farther away on the lattice (equal distances form one ring),
// until at least cfg.K windows are counted. This is the k-nearest-neighbour
// rule of T. Cover and P. Hart, "Nearest neighbor pattern classification",
// IEEE Trans. Information Theory 13(1), 1967, with the map's lattice
// distance between best-matching units in place of the distance between
// samples, which is how a self-organising map is used as a classifier once
// its units are labelled (T. Kohonen, "Self-Organizing Maps", 3rd ed.,
// Springer, 2001, from memory); whole rings keep the vote free of an
// arbitrary order among units at the same distance.
//
// The winner is the label with most windows, the unmarked windows
// counting as Unlabelled. Its confidence is the share of the votes with
// Laplace's rule of succession, (n + 1) / (N + C) for n of N votes among C
// classes (the labels and Unlabelled): few votes give a low confidence,
// however unanimous. Below cfg.MinConfidence, or on a tie, the window is
// Unknown.
//
// No label leaks: when own is set, the windows of ws are counted in c
// (Count(units, ws)), each under its Marked label, and that one count is
// taken out of the vote of the window itself. own is false when the
// windows are not part of c (a dump classified with an earlier model's
// knowledge). Without knowledge (c nil) every window is Unknown.
func Classify(l lattice.Lattice, c *model.Conditions, ws []features.Window, own bool, cfg Config) {
	for i := range ws {
		w := &ws[i]
		w.Condition, w.ConditionConfidence = Unknown, 0
	}
	if c == nil {
		return
	}
	order := make(map[int][]int) // units by distance from a window's unit
	votes := make([]int, len(c.Labels)+1)
	for i := range ws {
		w := &ws[i]
		cond := classify(l, c, w, own, order, votes, cfg)
		w.Condition, w.ConditionConfidence = cond.label, cond.confidence
	}
}

// classify returns the likely condition of w (see Classify); order caches
// the rings of units around each unit, votes is scratch space.
func classify(l lattice.Lattice, c *model.Conditions, w *features.Window, own bool, order map[int][]int, votes []int, cfg Config) condition {
	u := w.Unit
	ring, ok := order[u]
	if !ok {
		ring = byDistance(l, u)
		order[u] = ring
	}
	clear(votes)
	if own {
		votes[column(c, w.Marked)]--
	}
	total := 0
	for k := 0; k < len(ring); {
		d := l.Dist(u, ring[k])
		for ; k < len(ring) && l.Dist(u, ring[k]) <= d*(1+1e-9)+1e-12; k++ {
			for j, n := range c.Counts[ring[k]] {
				votes[j] += n
			}
		}
		if total = sum(votes); total >= cfg.K {
			break
		}
	}
	return decide(c, votes, total, cfg)
}

// decide words the vote.
func decide(c *model.Conditions, votes []int, total int, cfg Config) condition {
	if total <= 0 {
		return condition{label: Unknown}
	}
	win, tie := 0, false
	for j, n := range votes {
		switch {
		case n > votes[win]:
			win, tie = j, false
		case j != win && n == votes[win]:
			tie = true
		}
	}
	conf := float64(votes[win]+1) / float64(total+len(votes))
	label := Unlabelled
	if win < len(c.Labels) {
		label = c.Labels[win]
	}
	if tie || conf < cfg.MinConfidence {
		label = Unknown
	}
	return condition{label: label, confidence: conf, votes: total}
}

// byDistance returns the units of l ordered by lattice distance from u,
// u first, then by unit number.
func byDistance(l lattice.Lattice, u int) []int {
	units := make([]int, l.Units())
	for i := range units {
		units[i] = i
	}
	slices.SortFunc(units, func(a, b int) int {
		return cmp.Or(cmp.Compare(l.Dist(u, a), l.Dist(u, b)), cmp.Compare(a, b))
	})
	return units
}

func sum(s []int) int {
	t := 0
	for _, n := range s {
		t += n
	}
	return t
}
