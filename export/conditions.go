package export

import "time"

// Conditions is what a run's events file and the model's label knowledge
// say about the windows of a run (see package events), for the outputs.
type Conditions struct {
	Likely     []string  // per window of Run.Table: a label, "unlabelled" or "unknown"
	Confidence []float64 // per window, in [0, 1]
	Marked     []string  // per window, the label an event of this run gave it; "" for none
	Labels     []string  // the labels of the knowledge, sorted
	UnitCounts [][]int   // per unit, windows per label of Labels, then unmarked windows
	Events     []Event   // the run's events at known sites, for the timelines
	Unknown    []string  // sites of events that have no window in the run
	Span       string    // the marking rule in words
	Precedents []SitePrecedents
}

// Event is one record of an events file as the report shows it.
type Event struct {
	Site       string
	Start, End time.Time
	Label      string
	Note       string // empty unless the run was asked to show notes
}

// SitePrecedents is a site's most similar past windows, with what was
// recorded after them.
type SitePrecedents struct {
	Site       string
	Window     time.Time // start of the site's window they resemble
	Precedents []Precedent
}

// Precedent is one past window and what followed it.
type Precedent struct {
	Site     string
	Start    time.Time
	Distance float64
	After    []Event
}

// condition returns the likely condition of window i and its confidence:
// "" and 0 when the run has no label knowledge.
func (r *Run) condition(i int) (string, float64) {
	if r.Conditions == nil || r.Conditions.Likely == nil {
		return "", 0
	}
	return r.Conditions.Likely[i], r.Conditions.Confidence[i]
}
