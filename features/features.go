// Package features cuts each site's series into time windows and computes
// per-window features that tolerate irregular sampling and gaps.
//
// # Windows
//
// Windows have a fixed wall-clock length (Config.Window) and start every
// Config.Stride, counted on the wall clock of the zone Config.TZ (UTC when
// empty) from midnight of Monday 1970-01-05. Daily windows therefore start at
// every local midnight, 12 h windows at midnight and noon, and weekly windows
// on Mondays, the same way in every dump. Across a daylight-saving change a
// window keeps its wall-clock bounds, so a local day lasts 23 or 25 hours. A
// wall-clock bound that does not exist (it falls in a forward jump of the
// clock) or exists twice (a backward jump) becomes the first instant whose
// wall clock reads that time or later. Windows that have no length on the
// time line (inside a forward jump) do not exist. Window bounds are reported
// in UTC.
//
// Only the channels that some feature uses take part below. A site's
// windows run from the one holding its first reading to the one holding its
// last. A window with no reading at all is skipped as "empty". Otherwise its
// coverage is the smallest, over the channels, of present ÷ expected
// readings (capped at 1), where a channel expects the window's length
// divided by the median interval between its successive readings over the
// site's whole series; channels with fewer than two readings do not count.
// A window whose coverage is below Config.MinCoverage is skipped as
// "coverage". A channel missing from a window thus gives it coverage 0;
// channels a site never reports do not count, and their features are NaN.
//
// A window of a mobile site (one whose SiteData.Track holds positions) is
// located at the spherical centroid of the positions reported in it: the
// mean of their unit vectors, projected back onto the sphere, which is
// correct across the antimeridian. Windows without positions, and windows of
// fixed sites, take the registered position, if any. The table also keeps
// each mobile site's path at a finer step, PathStep: the median position of
// the fixes of each UTC hour (Table.Paths).
//
// # Features
//
// Features are named "<channel>.<stat>", channels in sorted order and stats
// in the order below, then "<a>~<b>.corr" for channel pairs a < b. For the
// readings v_1..v_n of a channel in a window, at instants t_1..t_n:
//
//	mean          arithmetic mean
//	std           sample standard deviation, denominator n−1
//	min, max      smallest and largest reading
//	p05, p50, p95 quantiles by definition 7 of Hyndman & Fan, "Sample
//	              quantiles in statistical packages", The American
//	              Statistician 50(4), 1996: x_⌊h⌋ + (h−⌊h⌋)(x_⌊h⌋+1 − x_⌊h⌋),
//	              h = (n−1)p + 1, on the sorted readings (R's and numpy's default)
//	trend         least-squares slope of v on t, per hour
//	acf1          lag-1 sample autocorrelation of successive readings,
//	              Σ(v_i−v̄)(v_{i+1}−v̄) / Σ(v_i−v̄)², whatever the time between them
//	day_amp       amplitude √(b²+c²) of the least-squares fit
//	              v = a + b·cos ωτ + c·sin ωτ, ω = 2π/24 h, τ the time of day
//	              of each reading on the zone's clock; gaps do no harm
//	day_phase     hour of that fit's peak on the zone's clock, atan2(c, b)/ω, in [0, 24)
//	period        period in hours of the strongest Fourier component of the
//	              series regularised to the channel's median interval
//	period_share  share of the spectral energy, DC excluded, at that period
//	flat          share of readings 2..n equal to their predecessor (a stuck sensor)
//	count         n
//
// For the spectrum, each reading goes to the nearest point of a regular grid
// from the window start at the channel's median interval over the site (at
// most 65,536 points; a finer interval is coarsened), readings meeting at a
// point are averaged, empty points are interpolated linearly between their
// filled neighbours and held constant before the first and after the last
// filled one; the mean is removed and the grid transformed with
// gonum/dsp/fourier. Energy counts both halves of the spectrum; ties go to
// the longer period. The correlation "<a>~<b>.corr" is Pearson's, over the
// readings of a and b at the same instants.
//
// A value that is undefined for a window is NaN: every stat but count
// without readings; std, trend, acf1 and flat with one reading; acf1 and the
// spectrum of a constant; the harmonic with fewer than three readings or
// readings that cover too little of the day to tell it from the level
// (degenerate normal equations), and day_phase of a zero amplitude; the
// spectrum with a grid of fewer than four points; a correlation with fewer
// than three shared instants or a constant channel.
//
// Config.Features chooses: "basic" is mean, std, min, max, p05, p50, p95,
// trend and flat; "full" is every stat; a list is comma-separated set
// names, stat names (for every channel) and feature names such as
// "flow.p95" or "flow~pressure.corr". Config.Pairs adds every pair.
package features

import (
	"errors"
	"fmt"
	"maps"
	"slices"
	"strings"
	"time"
)

// Config says how windows are cut and which features are computed. It is
// recorded in the model so that a later dump is cut the same way.
type Config struct {
	Window time.Duration `json:"window_ns"` // window length on the wall clock; must be positive

	// Stride is the distance between window starts; 0 means Window. A stride
	// shorter than the window gives overlapping windows; a longer one leaves
	// the readings between windows unused.
	Stride time.Duration `json:"stride_ns"`

	TZ          string  `json:"tz"`           // IANA zone the windows are aligned to at midnight; "" means UTC
	MinCoverage float64 `json:"min_coverage"` // minimum share of expected readings, in [0, 1]; 0 disables the rule

	// Features is "basic", "full" or a comma-separated list of set names,
	// stat names and feature names (see the package documentation).
	Features string `json:"features"`

	Pairs   bool `json:"pairs"` // add the Pearson correlation of each channel pair
	Workers int  `json:"-"`     // parallelism; 0 means all cores (not recorded as a result-changing setting)
}

// DefaultConfig returns the command's defaults: 24 h windows aligned to
// midnight UTC, coverage of at least 0.6, the basic feature set.
func DefaultConfig() Config {
	return Config{Window: 24 * time.Hour, MinCoverage: 0.6, Features: "basic"}
}

// Window is one site's window: the one record of it that travels through
// the stages. Extract fills its place, time and raw (unscaled) feature
// values; each later stage fills its own fields, in place, so that no
// stage keeps a slice in step with another by index.
type Window struct {
	Site       string
	Start, End time.Time // [Start, End), in UTC
	Lat, Lon   float64   // centroid of the window's positions, or the registered position
	Located    bool      // Lat and Lon are known
	Values     []float64 // in Table.Names order; NaN where a feature is undefined

	// Scaled is the window's row of the scaled matrix (Scaler.Transform
	// sets it to a view of that row); nil before scaling.
	Scaled []float64

	// Set by package mapper (mapper.Place) once the window is on the map.
	Unit   int     // best-matching unit
	Second int     // second-best unit
	QE     float64 // quantization error: Euclidean distance to Unit's codebook vector

	// Set by package timeline (timeline.Build) when the site is decoded.
	Regime     int  // decoded regime ID
	Unfamiliar bool // QE above the training windows' threshold quantile

	// Set by package events (events.Mark) when the run has an events
	// file: the label of the event that marks the window, "" when none
	// does.
	Marked string

	// Set by the run when it has label knowledge from events (package
	// events, Classify): the window's likely condition ("" without
	// knowledge) and its confidence in [0, 1].
	Condition           string
	ConditionConfidence float64
}

// Table is the feature table of a dataset.
type Table struct {
	Names   []string // feature names such as "flow.mean"
	Config  Config
	Windows []Window         // sorted by site, then start
	Skipped map[string]Skips // windows not used, by site; sites that skipped none are absent
	// Unused counts, by site, the readings of the channels the features
	// use that fall in no window kept: in skipped windows, or between
	// windows when the stride is longer than the window. Sites that use
	// every reading are absent.
	Unused map[string]int64

	// Step is the typical sampling step of the data: the median over series
	// of the median interval between readings; 0 when unknown.
	Step time.Duration
	// Steps are the sampling steps of the series with two readings or
	// more, sorted: Step is their median (MedianStep).
	Steps []time.Duration

	// Paths holds the track of each site whose dump reported positions
	// and that has windows, at PathStep (see Fix); nil when none did.
	Paths map[string][]Fix
}

// SkippedWindows returns the number of windows skipped, over all sites and
// reasons.
func (t *Table) SkippedWindows() int {
	n := 0
	for _, c := range t.skipsByReason() {
		n += c
	}
	return n
}

// skipsByReason totals the windows skipped over all sites, by reason.
func (t *Table) skipsByReason() map[string]int {
	by := map[string]int{}
	for _, s := range t.Skipped {
		for r, c := range s {
			by[r] += c
		}
	}
	return by
}

// SkipReasons words the windows skipped by reason, such as "3 for
// coverage, 1 for empty", or "no windows at all" when none were skipped.
func (t *Table) SkipReasons() string {
	by := t.skipsByReason()
	if len(by) == 0 {
		return "no windows at all"
	}
	var parts []string
	for _, r := range slices.Sorted(maps.Keys(by)) {
		parts = append(parts, fmt.Sprintf("%d for %s", by[r], r))
	}
	return strings.Join(parts, ", ")
}

// Skips counts the windows of one site that were not used, by reason:
// "empty" (no reading at all) or "coverage" (below Config.MinCoverage).
type Skips map[string]int

// ErrUnknownName is matched (errors.Is) by the errors of Extract and
// FitScaler for a feature list or weights that name a channel or a feature
// the data lacks: a mistake in the caller's settings that only the data can
// reveal.
var ErrUnknownName = errors.New("features: a name the data lacks")

// unknownNameError is an error about a name the data lacks.
type unknownNameError struct{ error }

func (e unknownNameError) Unwrap() error { return e.error }

func (unknownNameError) Is(target error) bool { return target == ErrUnknownName }

// Scaler is a per-feature normalisation fitted on the training windows and
// stored with the model, so that a later dump is scaled the same way.
type Scaler struct {
	Method  string    `json:"method"`  // "zscore" or "robust"
	Names   []string  `json:"names"`   // features kept, in Table.Names order
	Center  []float64 `json:"center"`  // mean or median
	Scale   []float64 `json:"scale"`   // standard deviation or interquartile range
	Weight  []float64 `json:"weight"`  // per-feature weight applied after scaling
	Dropped []string  `json:"dropped"` // zero-variance features left out
}

// WeekRun returns the number of windows that span a week: 7 days over the
// stride, rounded up, at least 1.
func (t *Table) WeekRun() int {
	stride := t.Config.Stride
	if stride == 0 {
		stride = t.Config.Window
	}
	if stride <= 0 {
		return 1
	}
	week := 7 * 24 * time.Hour
	return max(1, int((week+stride-1)/stride))
}

// Sequences returns the windows of every site as indices into t.Windows,
// in time order: one slice per site, sites in the order of the table.
func (t *Table) Sequences() [][]int {
	var seqs [][]int
	for i, w := range t.Windows {
		if i == 0 || w.Site != t.Windows[i-1].Site {
			seqs = append(seqs, nil)
		}
		seqs[len(seqs)-1] = append(seqs[len(seqs)-1], i)
	}
	return seqs
}
