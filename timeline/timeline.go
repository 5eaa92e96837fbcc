// Package timeline decodes each site's sequence of windows into regime
// segments and switch events, and flags unfamiliar windows.
package timeline

import "time"

// Entry is one window of one site on the map.
type Entry struct {
	Site       string
	Start, End time.Time
	BMU        int // best-matching unit
	Col, Row   int // BMU's cell on the lattice
	Regime     int // decoded regime ID
	QE         float64
	Unfamiliar bool // QE above the training windows' threshold quantile
}

// Switch is a change of a site's decoded regime.
type Switch struct {
	Site       string
	Time       time.Time // start of the first window in the new regime
	From, To   int       // regime IDs
	Before     int       // windows in the old regime before the switch
	After      int       // windows in the new regime after it
	Confidence float64   // in [0, 1]
}
