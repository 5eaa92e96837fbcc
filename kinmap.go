// Package kinmap maps the behaviour of sensor fleets. It wires the stages of
// the pipeline: ingest reads the dumps, features cuts each site's series into
// windows and computes their features, mapper trains a self-organising map on
// a torus and groups its units into regimes, timeline decodes each site's
// windows into regime segments and switch events, and export writes GeoJSON,
// timelines, pictures and a report.
//
// kinmap is an analysis aid, not a protective or control function.
package kinmap

import (
	"errors"
	"fmt"
	"io"
	"path/filepath"
	"time"

	"gonum.org/v1/gonum/mat"

	"github.com/kinmap/kinmap/attention"
	"github.com/kinmap/kinmap/export"
	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/history"
	"github.com/kinmap/kinmap/ingest"
	"github.com/kinmap/kinmap/mapper"
	"github.com/kinmap/kinmap/model"
	"github.com/kinmap/kinmap/timeline"
)

// Version is the version of kinmap recorded in run.json.
const Version = "0.1.0"

// Options configures a run of the pipeline.
type Options struct {
	Data     []string // dump files or glob patterns
	Sites    string   // site register file; "" for none
	Ingest   ingest.Options
	Register ingest.RegisterOptions
	Features features.Config
	Scaling  string             // "zscore" or "robust"
	Weights  map[string]float64 // per-feature weights; nil for all 1
	Map      mapper.Config
	Timeline timeline.Config
	History  string    // folder of earlier timelines; "" for none
	Log      io.Writer // progress messages; nil for none
	Events   EventOptions

	// WorkList holds the thresholds of the work list; zero fields take the
	// defaults of attention.DefaultConfig, but LongStay, whose default is
	// a week of windows, and Nearby and UnfamiliarRate, which follow the
	// timeline's minimum dwell and unfamiliar quantile.
	WorkList attention.Config

	// Units are the units of channels, such as "m3/h" for flow, in which
	// the regime descriptions give typical levels; they replace the
	// model's for assign and update, and are recorded in the model.
	Units map[string]string
}

// DefaultOptions returns the defaults of the command.
func DefaultOptions() Options {
	in := ingest.DefaultOptions()
	return Options{
		Ingest:   in,
		Register: ingest.RegisterOptions{Key: in.SiteCol, LatCol: in.LatCol, LonCol: in.LonCol},
		Features: features.DefaultConfig(),
		Scaling:  "zscore",
		Map:      mapper.Config{Hex: true, Rule: "batch", Init: "pca", Eta0: 0.5},
		Timeline: timeline.DefaultConfig(),
		Events:   DefaultEventOptions(),
	}
}

// UsageError is an error in the options of a run, as opposed to an error in
// the data. The command exits with status 2 for it.
type UsageError struct{ Err error }

func (e *UsageError) Error() string { return e.Err.Error() }
func (e *UsageError) Unwrap() error { return e.Err }

func usage(format string, a ...any) error { return &UsageError{fmt.Errorf(format, a...)} }

// IsUsage reports whether err is a usage error: one in the options rather
// than the data.
func IsUsage(err error) bool {
	var u *UsageError
	return errors.As(err, &u) || errors.Is(err, ingest.ErrUsage)
}

// Result is the outcome of a run: what was read, the feature table, whose
// windows record where each landed on the map and its decoded regime, the
// model and the switches.
type Result struct {
	Ingest     ingest.Summary
	Register   *ingest.Register
	Table      *features.Table // one record per window, filled by every stage
	X          *mat.Dense      // scaled features, one row per window of Table (each window's Scaled is a view of its row)
	Model      *model.Model
	Switches   []timeline.Switch
	Shared     []timeline.Shared    // conditions most sites of a regime showed together, read as such and not as switches
	Changes    []model.RegimeChange // regime renumbering by Update
	Conditions *Conditions          // what labelled events say of the windows; nil without events or label knowledge
	Info       RunInfo

	// The work list, the data health and, with a history, the comparison
	// with the previous period.
	Attention []attention.Row
	Health    []export.Finding
	Against   *export.Comparison

	// Levels are the typical raw levels of the channels by regime, for
	// the regime descriptions (SetLevels); Conclude sets them when the run
	// read the dump itself.
	Levels *export.Levels
	data   *ingest.Dataset // the dump read, until Conclude has the levels

	history *history.History                  // the history read for decoding, with the windows it revised; nil without one
	wrap    func(string, io.Writer) io.Writer // wraps every output writer; set by fault-injection tests
	// quality is the map's fit to the windows when Model was not built on
	// them (Assign); nil when Model.Quality measured them already.
	quality  *mapper.Quality
	revised  int              // windows of the history whose regime the decoding changed
	past     *past            // the history before the run; nil without one
	health   []export.Finding // the data health found before decoding
	workList attention.Config // the thresholds the work list was made with
	// daily waits for the summaries of the readings by site, channel and
	// day for the report's explorer, which feature extraction starts in
	// the background; nil without them.
	daily func() []export.DailySummary
	// showNotes lets the outputs show the free-text notes of events.
	showNotes bool
}

// RunInfo is the machine-readable summary of a run, written as run.json;
// export.Write adds the shared conditions (Result.Shared) as
// "shared_changes" and the files it wrote as "files".
type RunInfo struct {
	Tool     string               `json:"tool"`
	Version  string               `json:"version"`
	Command  string               `json:"command"`
	Started  time.Time            `json:"started"`
	Finished time.Time            `json:"finished"`
	Inputs   []ingest.FileSummary `json:"inputs"`
	Register string               `json:"register,omitempty"`
	Model    string               `json:"model,omitempty"`
	Options  OptionsRecord        `json:"options"`
	Counts   Counts               `json:"counts"`
	Quality  mapper.Quality       `json:"quality"`
	Regimes  *RegimeChoice        `json:"regime_choice,omitempty"`
	Timings  map[string]float64   `json:"timings_seconds"`
	Warnings []string             `json:"warnings"`

	// Health lists the data health findings (health.csv); Attention counts
	// the work list's rows by level; Against is the comparison with the
	// previous period of the history.
	Health    []export.Finding   `json:"health"`
	Attention map[string]int     `json:"attention"`
	Against   *export.Comparison `json:"against_previous,omitempty"`
}

// RegimeChoice is how the run reached its number of regimes (K, the
// runner-up and how close it came, every split tested), with a sentence
// that says so. Runs that train or update a map record it; assign does
// not, as its regimes are the model's.
type RegimeChoice struct {
	mapper.Choice
	// Found is the number of regimes the grouping found when some were
	// folded as phases (model.Phase): K, which counts the regimes the
	// sites hold, plus the phases. The runner-up is one split from it.
	// Omitted when nothing was folded, as it is then K.
	Found int    `json:"found,omitempty"`
	Note  string `json:"note"`
}

// Counts are the sizes of a run.
type Counts struct {
	Rows           int64 `json:"rows"`
	Readings       int64 `json:"readings"`
	Dropped        int64 `json:"readings_dropped"`
	Duplicates     int64 `json:"duplicates"`
	Unread         int64 `json:"readings_unread"` // of channels not read (ingest.Summary.Unselected)
	Sites          int   `json:"sites"`
	Channels       int   `json:"channels"`
	Windows        int   `json:"windows"`
	SkippedWindows int   `json:"windows_skipped"`
	Features       int   `json:"features"`
	Units          int   `json:"units"`
	Regimes        int   `json:"regimes"`
	Switches       int   `json:"switches"`
	Unfamiliar     int   `json:"unfamiliar_windows"`
	Revised        int   `json:"history_revised"` // windows of earlier dumps whose regime the run changed in the history
}

// OptionsRecord is the part of Options that run.json records.
type OptionsRecord struct {
	Ingest   ingest.Options         `json:"ingest"`
	Register ingest.RegisterOptions `json:"register"`
	Features features.Config        `json:"features"`
	Scaling  string                 `json:"scaling"`
	Weights  map[string]float64     `json:"weights,omitempty"`
	Map      mapper.Config          `json:"map"`
	Timeline timeline.Config        `json:"timeline"`
	History  string                 `json:"history,omitempty"`
	Events   *EventOptions          `json:"events,omitempty"`
	Units    map[string]string      `json:"units,omitempty"`
	WorkList attention.Config       `json:"work_list"`
}

// Validate reports the first usage error in the options.
func (o *Options) Validate() error {
	if len(o.Data) == 0 {
		return usage("kinmap: no dump given: name one or more files (kinmap.Options.Data)")
	}
	if err := o.Ingest.Validate(); err != nil {
		return err
	}
	if o.Scaling != "zscore" && o.Scaling != "robust" {
		return usage("kinmap: scaling %q: want zscore or robust", o.Scaling)
	}
	if err := o.Features.Validate(); err != nil {
		return &UsageError{err}
	}
	// The data size only sets defaults; a large one keeps the check from
	// refusing a number of regimes that a default grid would hold.
	if err := o.Map.WithDefaults(1_000_000, 1, 1).Validate(); err != nil {
		return &UsageError{err}
	}
	if err := o.Timeline.Validate(); err != nil {
		return &UsageError{err}
	}
	if err := o.WorkList.Validate(); err != nil {
		return &UsageError{err}
	}
	return nil
}

// stopwatch records the duration of named steps.
type stopwatch struct {
	last  time.Time
	times map[string]float64
}

func newStopwatch() *stopwatch { return &stopwatch{last: time.Now(), times: map[string]float64{}} }

func (s *stopwatch) lap(name string) {
	now := time.Now()
	s.times[name] += now.Sub(s.last).Seconds()
	s.last = now
}

// logf writes a progress message when a log is set.
func (o *Options) logf(format string, a ...any) {
	if o.Log != nil {
		fmt.Fprintf(o.Log, format+"\n", a...)
	}
}

// readInput reads the register and the dumps.
func readInput(o *Options, res *Result) (*ingest.Dataset, error) {
	if o.Sites != "" {
		reg, err := ingest.ReadRegister(o.Sites, o.Register)
		if err != nil {
			return nil, err
		}
		res.Register = reg
		o.Ingest.Register = reg
		o.logf("register: %d sites from %s", len(reg.Sites), filepath.Base(o.Sites))
	}
	o.logf("reading %d input(s)", len(o.Data))
	ds, err := ingest.Read(o.Data, o.Ingest)
	if err != nil {
		return nil, err
	}
	res.Ingest = ds.Summary
	res.data = ds
	res.Info.Warnings = append(res.Info.Warnings, dropWarnings(&ds.Summary)...)
	if u := ds.Summary.EpochUnit; u != nil {
		res.Info.Warnings = append(res.Info.Warnings, u.Error())
	}
	o.logf("%s", ds.Summary.String())
	return ds, nil
}
