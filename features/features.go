// Package features cuts each site's series into time windows and computes
// per-window features that tolerate irregular sampling and gaps.
package features

import (
	"time"
)

// Config says how windows are cut and which features are computed. It is
// recorded in the model so that a later dump is cut the same way.
type Config struct {
	Window      time.Duration // window length
	Stride      time.Duration // distance between window starts; 0 means Window
	TZ          string        // IANA zone the windows are aligned to at midnight; "" means UTC
	MinCoverage float64       // minimum share of expected readings; 0 disables the rule
	Features    string        // "basic", "full" or a comma-separated list
	Pairs       bool          // add the Pearson correlation of each channel pair
	Workers     int           // parallelism; 0 means all cores (not recorded as a result-changing setting)
}

// DefaultConfig returns the command's defaults: 24 h windows aligned to
// midnight UTC, coverage of at least 0.6, the basic feature set.
func DefaultConfig() Config {
	return Config{Window: 24 * time.Hour, MinCoverage: 0.6, Features: "basic"}
}

// Window is one site's window and its raw (unscaled) feature values.
type Window struct {
	Site       string
	Start, End time.Time // [Start, End)
	Lat, Lon   float64   // centroid of the window's positions, or the registered position
	Located    bool      // Lat and Lon are known
	Values     []float64 // in Table.Names order; NaN where a feature is undefined
}

// Table is the feature table of a dataset.
type Table struct {
	Names   []string // feature names such as "flow.mean"
	Config  Config
	Windows []Window         // sorted by site, then start
	Skipped map[string]Skips // windows not used, by site
}

// Skips counts the windows of one site that were not used, by reason
// (for example "coverage").
type Skips map[string]int

// Scaler is a per-feature normalisation fitted on the training windows and
// stored with the model, so that a later dump is scaled the same way.
type Scaler struct {
	Method  string    // "zscore" or "robust"
	Names   []string  // features kept, in Table.Names order
	Center  []float64 // mean or median
	Scale   []float64 // standard deviation or interquartile range
	Weight  []float64 // per-feature weight applied after scaling
	Dropped []string  // zero-variance features left out
}
