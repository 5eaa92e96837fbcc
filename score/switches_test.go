package score

import (
	"fmt"
	"math/rand/v2"
	"testing"
	"time"
)

// day0 is an arbitrary midnight; the cases count in hours from it.
var day0 = time.Date(2026, 6, 1, 0, 0, 0, 0, time.UTC)

func ev(site string, hours float64) Event {
	return Event{site, day0.Add(time.Duration(hours * float64(time.Hour)))}
}

func TestSwitches(t *testing.T) {
	const day = 24 * time.Hour
	tests := []struct {
		name         string
		truth, found []Event
		tol          time.Duration
		tp, fp, fn   int
	}{
		{"exact", []Event{ev("a", 24)}, []Event{ev("a", 24)}, day, 1, 0, 0},
		{"one day late, bound included", []Event{ev("a", 24)}, []Event{ev("a", 48)}, day, 1, 0, 0},
		{"one day early, bound included", []Event{ev("a", 48)}, []Event{ev("a", 24)}, day, 1, 0, 0},
		{"a second past the bound", []Event{ev("a", 24)}, []Event{{"a", day0.Add(48*time.Hour + time.Second)}}, day, 0, 1, 1},
		{"zero tolerance", []Event{ev("a", 24)}, []Event{ev("a", 24), ev("a", 25)}, 0, 1, 1, 0},
		{"other site", []Event{ev("a", 24)}, []Event{ev("b", 24)}, day, 0, 1, 1},
		// Two found switches near one true switch: one hit, one false alarm.
		{"double match", []Event{ev("a", 48)}, []Event{ev("a", 40), ev("a", 56)}, day, 1, 1, 0},
		// One found switch near two true ones: one hit, one miss.
		{"shared found", []Event{ev("a", 40), ev("a", 56)}, []Event{ev("a", 48)}, day, 1, 0, 1},
		// Nearest-first pairing would give the true switch at 10 the found
		// one at 25 (15 h, nearer than −10) and leave the true one at 40
		// without a partner; the maximum matching pairs 10 with −10 and 40
		// with 25.
		{"nearest first is not maximum", []Event{ev("a", 10), ev("a", 40)}, []Event{ev("a", -10), ev("a", 25)}, day, 2, 0, 0},
		// Unsorted input, interleaved sites.
		{"unsorted", []Event{ev("b", 100), ev("a", 24), ev("b", 10)}, []Event{ev("a", 30), ev("b", 12), ev("b", 300)}, day, 2, 1, 1},
		{"nothing found", []Event{ev("a", 24), ev("b", 24)}, nil, day, 0, 0, 2},
		{"nothing true", nil, []Event{ev("a", 24)}, day, 0, 1, 0},
		{"nothing at all", nil, nil, day, 0, 0, 0},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			m := Switches(tt.truth, tt.found, tt.tol)
			if m.TP != tt.tp || m.FP != tt.fp || m.FN != tt.fn {
				t.Errorf("TP, FP, FN = %d, %d, %d; want %d, %d, %d", m.TP, m.FP, m.FN, tt.tp, tt.fp, tt.fn)
			}
		})
	}
}

// Precision, recall and F1 from the counts, with the conventions for
// nothing found and nothing to find.
func TestSwitchesRates(t *testing.T) {
	tests := []struct {
		name         string
		truth, found []Event
		p, r, f1     float64
	}{
		// 2 of 3 found are right, 2 of 4 true are found: P = 2/3, R = 1/2,
		// F1 = 2·(2/3)(1/2) / (2/3 + 1/2) = 4/7.
		{"counts", []Event{ev("a", 0), ev("a", 100), ev("a", 200), ev("a", 300)}, []Event{ev("a", 1), ev("a", 101), ev("a", 150)}, 2.0 / 3, 0.5, 4.0 / 7},
		{"nothing found", []Event{ev("a", 0)}, nil, 1, 0, 0},
		{"nothing true", nil, []Event{ev("a", 0)}, 0, 1, 0},
		{"nothing at all", nil, nil, 1, 1, 1},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			m := Switches(tt.truth, tt.found, 2*time.Hour)
			if !near(m.Precision, tt.p) || !near(m.Recall, tt.r) || !near(m.F1, tt.f1) {
				t.Errorf("P, R, F1 = %g, %g, %g; want %g, %g, %g", m.Precision, m.Recall, m.F1, tt.p, tt.r, tt.f1)
			}
		})
	}
}

func near(a, b float64) bool { return a-b < 1e-12 && b-a < 1e-12 }

// The pairing is a maximum matching: it pairs as many switches as Kuhn's
// augmenting-path algorithm on the bipartite graph of pairs within the
// tolerance (H. W. Kuhn, "The Hungarian method for the assignment
// problem", 1955; the augmenting-path form, from memory), on random sets
// dense enough that switches compete for partners.
func TestSwitchesMaximum(t *testing.T) {
	r := rand.New(rand.NewPCG(7, 14))
	for trial := range 500 {
		var truth, found []Event
		for range r.IntN(12) {
			truth = append(truth, ev(fmt.Sprint("s", r.IntN(3)), float64(r.IntN(200))))
		}
		for range r.IntN(12) {
			found = append(found, ev(fmt.Sprint("s", r.IntN(3)), float64(r.IntN(200))))
		}
		tol := time.Duration(r.IntN(40)) * time.Hour
		m := Switches(truth, found, tol)
		want := kuhn(truth, found, tol)
		if m.TP != want || m.FP != len(found)-want || m.FN != len(truth)-want {
			t.Fatalf("trial %d: TP, FP, FN = %d, %d, %d; a maximum matching pairs %d of %d true and %d found\ntruth %v\nfound %v\ntol %v",
				trial, m.TP, m.FP, m.FN, want, len(truth), len(found), truth, found, tol)
		}
	}
}

// kuhn returns the size of a maximum matching between true and found
// events of the same site at most tol apart, by augmenting paths.
func kuhn(truth, found []Event, tol time.Duration) int {
	partner := make([]int, len(found)) // the true event matched to each found one, or -1
	for j := range partner {
		partner[j] = -1
	}
	var augment func(i int, seen []bool) bool
	augment = func(i int, seen []bool) bool {
		for j, f := range found {
			if seen[j] || f.Site != truth[i].Site || f.Time.Sub(truth[i].Time).Abs() > tol {
				continue
			}
			seen[j] = true
			if partner[j] < 0 || augment(partner[j], seen) {
				partner[j] = i
				return true
			}
		}
		return false
	}
	n := 0
	for i := range truth {
		if augment(i, make([]bool, len(found))) {
			n++
		}
	}
	return n
}
