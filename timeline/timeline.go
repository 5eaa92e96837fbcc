// Package timeline decodes each site's sequence of windows into regime
// segments and switch events, and flags unfamiliar windows.
package timeline

import "time"

// Switch is a change of a site's decoded regime.
type Switch struct {
	Site       string
	Time       time.Time // start of the first window in the new regime
	Onset      time.Time // start of the first window of a drift towards the new regime that led to the switch (see Build); Time when the windows before it show none
	From, To   int       // regime IDs
	Before     int       // windows in the old regime before the switch
	After      int       // windows in the new regime after it
	Confidence float64   // in [0, 1]
}

// Result is what the decoding finds besides the regimes it records in the
// windows.
type Result struct {
	Switches []Switch // sorted by site and time
	Shared   []Shared // conditions that most sites of a regime showed together, sorted by start
}

// Prior is where a site stood before the windows being decoded, taken from
// the timelines of earlier dumps: the regime of its last window and how many
// consecutive windows it had spent in that regime. Decoding continues from
// it, so that a switch across the boundary of two dumps is found at the
// first window of the new regime.
type Prior struct {
	Regime  int // regime ID
	Windows int // consecutive windows in Regime at the end of the history, at least 1
}
