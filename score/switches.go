package score

import (
	"cmp"
	"slices"
	"time"
)

// Event is a switch of one site at a time.
type Event struct {
	Site string
	Time time.Time
}

// Match is the agreement of found switches with true ones.
type Match struct {
	TP int `json:"tp"` // found switches matched to a true one
	FP int `json:"fp"` // found switches matched to none
	FN int `json:"fn"` // true switches matched to none

	// Precision is TP / (TP + FP), and 1 when nothing was found: no found
	// switch is false. Recall is TP / (TP + FN), and 1 when there was
	// nothing to find. F1 is their harmonic mean, 0 when both are 0.
	Precision float64 `json:"precision"`
	Recall    float64 `json:"recall"`
	F1        float64 `json:"f1"`
}

// Switches matches found switches to true ones and counts the agreement.
// A found switch matches a true switch of the same site at most tol apart
// (|found − true| ≤ tol, the bound included); each switch is used in at
// most one pair, and the pairs are as many as possible (a maximum matching
// of the bipartite graph of such pairs), so that two found switches near
// one true switch count one hit and one false alarm.
//
// Per site, both lists are sorted by time and paired in order: the
// earliest true switch takes the earliest found switch in its reach, found
// switches too early for it are false alarms, and a true switch whose
// reach starts after the found switch is a miss. Since every reach is an
// interval of the same width, reaches start and end in the order of their
// switches, and taking the earliest candidate never leaves a later true
// switch worse off than any other choice would; so the greedy pairing is
// a maximum matching (the exchange argument for interval scheduling).
func Switches(truth, found []Event, tol time.Duration) Match {
	var m Match
	t, f := sortedEvents(truth), sortedEvents(found)
	for i, j := 0, 0; i < len(t) || j < len(f); {
		switch {
		case i == len(t):
			m.FP++
			j++
		case j == len(f):
			m.FN++
			i++
		case f[j].Site < t[i].Site || f[j].Site == t[i].Site && f[j].Time.Before(t[i].Time.Add(-tol)):
			m.FP++ // no true switch at or after t[i] can reach it
			j++
		case t[i].Site < f[j].Site || f[j].Time.After(t[i].Time.Add(tol)):
			m.FN++ // no found switch at or after f[j] is in its reach
			i++
		default:
			m.TP++
			i++
			j++
		}
	}
	m.Precision = ratio(float64(m.TP), m.TP+m.FP)
	m.Recall = ratio(float64(m.TP), m.TP+m.FN)
	if s := m.Precision + m.Recall; s > 0 {
		m.F1 = 2 * m.Precision * m.Recall / s
	}
	return m
}

// sortedEvents returns a copy of es sorted by site, then time.
func sortedEvents(es []Event) []Event {
	return sortedBySite(es, func(e Event) (string, time.Time) { return e.Site, e.Time })
}

// sortedBySite returns a copy of xs sorted by the site, then the time, that
// key gives.
func sortedBySite[T any](xs []T, key func(T) (string, time.Time)) []T {
	s := slices.Clone(xs)
	slices.SortFunc(s, func(a, b T) int {
		sa, ta := key(a)
		sb, tb := key(b)
		return cmp.Or(cmp.Compare(sa, sb), ta.Compare(tb))
	})
	return s
}

// ratio is k / n, and 1 when n is 0: nothing was wrong, as a precision with
// nothing found or a covering of no windows.
func ratio(k float64, n int) float64 {
	if n == 0 {
		return 1
	}
	return k / float64(n)
}
