package events

import (
	"cmp"
	"slices"
	"time"

	"github.com/kinmap/kinmap/features"
)

// SiteScore is how much a site's recent windows resemble windows that
// carried a label.
type SiteScore struct {
	Site     string
	Score    float64   // mean over the recent windows of the confidence of those classified as the label, 0 for the others; in [0, 1]
	Windows  int       // recent windows
	Matching int       // recent windows classified as the label
	Last     time.Time // end of the site's last window
}

// Resemble scores each site by its windows that end within recent of its
// last window's end: the mean, over them, of the confidence of each
// window classified as label (its Condition, set by Classify), a window
// classified otherwise counting 0. Sites come highest score first, then by
// id; sites with no matching window are left out. It is the hook by which
// a triage list ranks sites that look like what preceded a failure:
// Resemble(ws, "bearing failure", 7*24*time.Hour) after Classify(...).
func Resemble(ws []features.Window, label string, recent time.Duration) []SiteScore {
	last := make(map[string]time.Time)
	for _, w := range ws {
		if w.End.After(last[w.Site]) {
			last[w.Site] = w.End
		}
	}
	acc := make(map[string]*SiteScore)
	for _, w := range ws {
		end := last[w.Site]
		if w.End.Before(end.Add(-recent)) {
			continue
		}
		s := acc[w.Site]
		if s == nil {
			s = &SiteScore{Site: w.Site, Last: end}
			acc[w.Site] = s
		}
		s.Windows++
		if w.Condition == label {
			s.Matching++
			s.Score += w.ConditionConfidence
		}
	}
	var out []SiteScore
	for _, s := range acc {
		if s.Matching == 0 {
			continue
		}
		s.Score /= float64(s.Windows)
		out = append(out, *s)
	}
	slices.SortFunc(out, func(a, b SiteScore) int {
		return cmp.Or(cmp.Compare(b.Score, a.Score), cmp.Compare(a.Site, b.Site))
	})
	return out
}
