// Package timeline decodes each site's sequence of windows into regime
// segments and switch events, and flags unfamiliar windows.
package timeline

import (
	"time"

	"github.com/kinmap/kinmap/mapper"
)

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

// Config holds the decoding settings. A zero field takes its default.
type Config struct {
	// SwitchCost is the penalty per change of regime, in the units of the
	// scaled feature space (the same units as a quantization error). Zero
	// means automatic: twice the median quantization error of the model's
	// training windows. Moving a window by δ changes the difference of its
	// distances to two centroids by at most 2δ (triangle inequality), so a
	// one-window excursion to another regime and back, which costs two
	// switches, needs the window to be displaced by more than twice the
	// typical residual of a training window; a lasting switch only needs the
	// windows after it to fit the new regime better by one SwitchCost in
	// total.
	SwitchCost float64 `json:"switch_cost"`

	// MinDwell is the least number of windows a site spends in a regime on
	// each side of a switch; the decoding is the cheapest among the state
	// sequences that obey it, so a shorter stay is absorbed by a neighbouring
	// segment. A site whose windows all fit in one segment may have fewer.
	// Zero means 2; 1 disables the rule.
	MinDwell int `json:"min_dwell"`

	// UnfamiliarQ is the quantile of the training windows' quantization
	// errors above which a window is unfamiliar. Zero means 0.99.
	UnfamiliarQ float64 `json:"unfamiliar_q"`
}

// DefaultConfig returns the defaults: an automatic switch cost, a dwell of
// at least 2 windows and the 99th percentile for unfamiliar windows.
func DefaultConfig() Config {
	return Config{MinDwell: mapper.DefaultMinDwell, UnfamiliarQ: 0.99}
}
