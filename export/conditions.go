package export

import "time"

// Conditions is what a run's events file and the model's label knowledge
// say about the windows of a run (see package events), for the outputs.
// Each window's likely condition is on the window (features.Window).
type Conditions struct {
	Labels     []string // the labels of the knowledge, sorted
	UnitCounts [][]int  // per unit, windows per label of Labels, then unmarked windows
	Events     []Event  // the run's events at known sites, for the timelines
	Unknown    []string // sites of events that have no window in the run
	Span       string   // the marking rule in words
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
