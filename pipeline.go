package kinmap

import (
	"errors"
	"fmt"
	"strings"
	"sync"
	"time"

	"github.com/kinmap/kinmap/export"
	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/history"
	"github.com/kinmap/kinmap/ingest"
	"github.com/kinmap/kinmap/mapper"
	"github.com/kinmap/kinmap/model"
	"github.com/kinmap/kinmap/timeline"
)

// Train runs the whole pipeline on the dumps of o: it reads them, computes
// the window features, fits the normalisation, trains a new map, finds its
// regimes and decodes every site's timeline.
func Train(o Options) (*Result, error) {
	if err := o.Validate(); err != nil {
		return nil, err
	}
	res, sw := Begin("run", o), newStopwatch()
	ds, err := readInput(&o, res)
	if err != nil {
		return nil, err
	}
	sw.lap("read")
	if err := extract(&o, res, ds, o.Features); err != nil {
		return nil, OptionError(err)
	}
	sw.lap("features")

	sc, err := res.Scale(o)
	if err != nil {
		return nil, err
	}
	mc := o.Map
	mc.Progress = progress(&o)
	o.logf("training on %d windows × %d features", res.X.RawMatrix().Rows, len(sc.Names))
	if res.Model, err = model.Train(res.Table, res.X, sc, mc); err != nil {
		return nil, err
	}
	res.Model.Units = channelUnits(res.Model, res.Ingest.Units, o.Units)
	sw.lap("train")
	if err := res.Conclude(o, sw.times); err != nil {
		return nil, err
	}
	return res, nil
}

// Assign maps the dumps of o onto an existing model without training: the
// same windows and features, the same normalisation, the same lattice and
// the same regime numbers.
func Assign(o Options, m *model.Model) (*Result, error) {
	if err := o.Validate(); err != nil {
		return nil, err
	}
	res, sw := Begin("assign", o), newStopwatch()
	if err := project(&o, res, m, sw, true); err != nil {
		return nil, err
	}
	res.Model = m
	asg := m.Map.Assign(res.X, o.Map.Workers)
	if err := mapper.Place(res.Table.Windows, asg); err != nil {
		return nil, err
	}
	q := m.Map.Quality(asg)
	// Its warnings advise on training (the grid, the neighbourhood width),
	// which assign does not do: a dump of a few sites leaves most of the
	// model's units without a window, as it should. The figures stay.
	q.Warnings = []string{}
	res.quality = &q
	sw.lap("assign")
	if err := res.Conclude(o, sw.times); err != nil {
		return nil, err
	}
	return res, nil
}

// Update continues training an existing model on the dumps of o with a
// small neighbourhood, derives the regimes again and matches them to the
// model's regimes (Hungarian algorithm on centroid distances), so that a
// regime keeps its number; Result.Changes lists every renumbering, new
// regime, split and merge. The number of regimes stays that of the model,
// its phases (model.Phase) included, unless o.Map.Regimes sets another
// number; an area no site holds after decoding is again a phase. The feature schema and the normalisation stay
// those of the model.
func Update(o Options, prev *model.Model) (*Result, error) {
	if err := o.Validate(); err != nil {
		return nil, err
	}
	res, sw := Begin("update", o), newStopwatch()
	if err := project(&o, res, prev, sw, false); err != nil {
		return nil, err
	}
	mc := o.Map
	mc.Rule, mc.Init = prev.Training.Rule, prev.Training.Init
	if mc.Regimes == 0 {
		// The number of regimes stays unless asked otherwise: choosing it
		// afresh on every dump would make numbers come and go with noise.
		// The phases are areas of the map as the regimes are; they stay
		// phases when no site holds them (fold).
		mc.Regimes = len(prev.Regimes) + len(prev.Phases)
	}
	mc.Progress = progress(&o)
	var err error
	if res.Model, res.Changes, err = model.Update(prev, res.Table, res.X, mc); err != nil {
		return nil, err
	}
	if o.Map.Regimes == 0 && res.Model.Choice != nil {
		res.Model.Choice.Kept = true
	}
	res.Model.Units = channelUnits(prev, res.Ingest.Units, o.Units)
	res.Info.Warnings = append(res.Info.Warnings, unlabelledWarnings(prev, res.Changes)...)
	sw.lap("train")
	if err := res.Conclude(o, sw.times); err != nil {
		return nil, err
	}
	return res, nil
}

// progress returns the per-epoch progress report of o, or nil.
func progress(o *Options) func(int, float64) {
	if o.Map.Progress != nil || o.Log == nil {
		return o.Map.Progress
	}
	return func(epoch int, qe float64) { o.logf("epoch %d: quantization error %.4f", epoch+1, qe) }
}

// project reads the dumps and turns them into the model's scaled feature
// space. With partial set (assign), channels of the model missing from the
// dump, or from a site, leave their features NaN in res.X instead of
// failing, for mapper.Map.Assign.
func project(o *Options, res *Result, m *model.Model, sw *stopwatch, partial bool) error {
	// Only the model's channels are read unless the options choose: a
	// model trained on some channels of a dump applies to the whole dump.
	if len(o.Ingest.Channels) == 0 {
		o.Ingest.Channels = features.Channels(m.FeatureNames)
		o.Ingest.Absent = partial
	}
	ds, err := readInput(o, res)
	if err != nil {
		return err
	}
	sw.lap("read")
	fc := m.FeatureConfig
	fc.Workers = o.Features.Workers
	if err := extract(o, res, ds, fc); err != nil {
		return err
	}
	var absent map[string][]string
	if partial {
		conform(res.Table, m.FeatureNames)
		absent = absentChannels(res.Table, m.Scaler.Names)
	}
	if err := m.CheckSchema(res.Table.Names); err != nil {
		return err
	}
	if res.X, err = m.Scaler.Transform(res.Table); err != nil {
		return err
	}
	if n := maskAbsent(res.Table, res.X, m.Scaler.Names, absent); len(res.Ingest.Absent) > 0 {
		res.Info.Warnings = append(res.Info.Warnings, absentWarning(res.Ingest.Absent, n, res.Ingest.Unselected))
	}
	sw.lap("features")
	return nil
}

// OptionError returns err as a *UsageError when it reports a name that the
// feature list or the weights of the options give and the data lacks
// (features.ErrUnknownName), or windows that do not suit the data
// (features.StepError, features.WindowLimitError): a misspelt option,
// which only the data could reveal. It is for runs that take their features from the options; assign
// and update take them from the model, where such a name is a data error.
func OptionError(err error) error {
	var (
		step  *features.StepError
		limit *features.WindowLimitError
	)
	if errors.Is(err, features.ErrUnknownName) || errors.As(err, &step) || errors.As(err, &limit) {
		return &UsageError{err}
	}
	return err
}

// NoWindowError reports a dump of which every window was skipped, by the
// coverage rule or for want of readings.
type NoWindowError struct {
	Reasons string // windows skipped for each reason, such as "12 for low coverage"
	// Unit is set when integer epoch times look like another unit than
	// the one they were read in, the likely cause.
	Unit *ingest.UnitError
}

func (e *NoWindowError) Error() string {
	if e.Unit != nil {
		return fmt.Sprintf("kinmap: no usable window: every window of every site was skipped (%s): %v", e.Reasons, e.Unit)
	}
	return fmt.Sprintf("kinmap: no usable window: every window of every site was skipped (%s); lower the minimum coverage or lengthen the window", e.Reasons)
}

// Unwrap returns the likely cause, nil when none is known.
func (e *NoWindowError) Unwrap() error {
	if e.Unit == nil {
		return nil
	}
	return e.Unit
}

func extract(o *Options, res *Result, ds *ingest.Dataset, fc features.Config) error {
	t, err := features.Extract(ds, fc)
	if err != nil {
		return err
	}
	if len(t.Windows) == 0 {
		return &NoWindowError{Reasons: t.SkipReasons(), Unit: res.Ingest.EpochUnit}
	}
	res.Table = t
	// The summaries are for the outputs alone: they run beside the
	// stages that follow, and fill the cores the regime choice, which is
	// serial, leaves idle. Conclude waits for them.
	done := make(chan []export.DailySummary, 1)
	go func() { done <- export.DailySummaries(ds, fc.Workers) }()
	res.daily = sync.OnceValue(func() []export.DailySummary { return <-done })
	o.logf("features: %d windows, %d features", len(t.Windows), len(t.Names))
	return nil
}

// Scale fits the normalisation of o on the feature table of r (the
// training windows) and scales the table into r.X. Features without
// variance are left out with a warning; weights for a feature the table
// lacks are a usage error.
func (r *Result) Scale(o Options) (*features.Scaler, error) {
	sc, err := features.FitScaler(r.Table, o.Scaling, o.Weights)
	if err != nil {
		return nil, OptionError(err)
	}
	if len(sc.Dropped) > 0 {
		r.Info.Warnings = append(r.Info.Warnings, droppedWarning(sc.Dropped))
	}
	if r.X, err = sc.Transform(r.Table); err != nil {
		return nil, err
	}
	return sc, nil
}

// maxNamedDropped is how many features without variance one warning names;
// a wide dump can drop thousands, and the model keeps the full list.
const maxNamedDropped = 10

// droppedWarning says which features were left out for having no variance,
// in one warning however many there are.
func droppedWarning(names []string) string {
	if len(names) == 1 {
		return fmt.Sprintf("feature %s has no variance in the training windows and is left out", names[0])
	}
	list := strings.Join(names[:min(len(names), maxNamedDropped)], ", ")
	if more := len(names) - maxNamedDropped; more > 0 {
		list += fmt.Sprintf(" and %d more", more)
	}
	return fmt.Sprintf("%d features have no variance in the training windows and are left out: %s", len(names), list)
}

// Conclude finishes a run whose windows are on the map (Table, X and
// Model set, each window placed by mapper.Place): it decodes every site's timeline, continuing from
// the periods of the history folder of o that the model's lineage numbered,
// and completes the run summary with the durations of the earlier steps, by
// name, in timings. A model without a lineage (a new map) is replaced by a
// copy that has one.
func (r *Result) Conclude(o Options, timings map[string]float64) error {
	sw := &stopwatch{last: time.Now(), times: timings}
	if sw.times == nil {
		sw.times = map[string]float64{}
	}
	r.health = healthOf(r, r.Model.Scaler.Names)
	r.Info.Warnings = append(r.Info.Warnings, timeWarnings(&r.Ingest)...)
	if err := r.classify(&o); err != nil {
		return err
	}
	if err := decode(&o, r); err != nil {
		return err
	}
	r.fold(&o)
	if r.data != nil {
		r.levels(&o, r.data)
		r.data = nil
	}
	sw.lap("decode")
	triage(&o, r)
	r.dailySummaries()
	finish(r, sw)
	return nil
}

// dailySummaries returns the daily summaries of the readings, once they
// are done; nil when the run made none.
func (r *Result) dailySummaries() []export.DailySummary {
	if r.daily == nil {
		return nil
	}
	return r.daily()
}

// decode decodes the timelines of res, continuing from the history folder
// of o when there is one.
func decode(o *Options, res *Result) error {
	if res.Model.Lineage == "" {
		// A new map, or one that predates lineages, starts its own.
		m := *res.Model
		m.Lineage = m.LineageOrDerived()
		res.Model = &m
	}
	c := (&history.History{}).Continue(res.Model, res.Model.Lineage, res.Table.Windows)
	if o.History != "" {
		h, err := history.Read(o.History)
		if err != nil {
			return err
		}
		res.past = pastOf(h, res.Model.Lineage)
		res.health = append(res.health, silentIn(h, res.Table, res.health)...)
		res.health = append(res.health, historySpan(h, res.Table)...)
		if _, n := keepStored(h, history.Windows(res.Table.Windows), res.Ingest.Start, res.Ingest.End, res.Table.Step); n > 0 {
			res.health = append(res.health, export.Finding{Kind: export.HealthCut, Count: int64(n),
				Detail: "windows that the dump begins or ends inside, so holds only part of, and that the history holds already: the history keeps its own; this run's tables show the part"})
		}
		c = h.Continue(res.Model, res.Model.Lineage, res.Table.Windows)
		res.history = h
		res.Info.Warnings = append(res.Info.Warnings, h.Notes...)
		res.Info.Warnings = append(res.Info.Warnings, c.Warnings...)
		o.logf("history: %d sites continue from earlier dumps, %d of their windows decoded again", len(c.Priors), c.Tail())
	}
	ws := c.Prepend(res.Model, res.Table.Windows)
	dec, err := timeline.BuildFrom(res.Model, ws, o.Timeline, c.Priors)
	if err != nil {
		return err
	}
	if res.history != nil {
		res.health = append(res.health, revisedFindings(res.history, ws[:c.Tail()])...)
	}
	var revised int
	res.Table.Windows, res.Switches, revised = c.Settle(ws, dec.Switches)
	res.revised = revised
	// Conditions that began in the history's windows were reported with
	// them.
	res.Shared = nil
	if first, _ := features.Span(res.Table.Windows); len(res.Table.Windows) > 0 {
		for _, sh := range dec.Shared {
			if !sh.Start.Before(first) {
				res.Shared = append(res.Shared, sh)
			}
		}
	}
	o.logf("timelines: %d switches", len(res.Switches))
	if revised > 0 {
		o.logf("history: %d windows of earlier dumps decoded anew", revised)
	}
	return nil
}

// Begin starts the result of a run of the named command with options o:
// its summary records the command, the start time and the options.
func Begin(command string, o Options) *Result {
	return &Result{Info: RunInfo{
		Tool:     "kinmap",
		Version:  Version,
		Command:  command,
		Started:  time.Now().UTC(),
		Register: o.Sites,
		Warnings: []string{}, // a list in run.json even when empty
		Options: OptionsRecord{
			Ingest: o.Ingest, Register: o.Register, Features: o.Features, Scaling: o.Scaling,
			Weights: o.Weights, Map: o.Map, Timeline: o.Timeline, History: o.History, Units: o.Units,
			Events: eventsRecord(o.Events), WorkList: o.WorkList,
		},
	}}
}

func finish(res *Result, sw *stopwatch) {
	info := &res.Info
	info.Finished = time.Now().UTC()
	info.Timings = sw.times
	info.Inputs = res.Ingest.Files
	info.Quality = res.Model.Quality // built on the run's windows
	if res.quality != nil {
		info.Quality = *res.quality
	}
	info.Warnings = append(info.Warnings, info.Quality.Warnings...)
	if c := res.Model.Choice; c != nil && info.Command != "assign" {
		info.Regimes = regimeChoice(c, res.Model.PhaseNotes())
		if c.Marginal {
			info.Warnings = append(info.Warnings, info.Regimes.Note)
		}
	}
	res.Health = res.health
	info.Health = append([]export.Finding{}, res.health...) // a list in run.json even when empty
	info.Attention = map[string]int{}
	for _, a := range res.Attention {
		info.Attention[a.Level.String()]++
	}
	info.Against = res.Against
	var dropped int64
	for _, n := range res.Ingest.Dropped {
		dropped += n
	}
	var unread int64
	for _, n := range res.Ingest.Unselected {
		unread += n
	}
	unfamiliar := 0
	for _, w := range res.Table.Windows {
		if w.Unfamiliar {
			unfamiliar++
		}
	}
	info.Counts = Counts{
		Rows:           res.Ingest.Rows,
		Readings:       res.Ingest.Readings,
		Dropped:        dropped,
		Duplicates:     res.Ingest.Duplicates,
		Unread:         unread,
		Sites:          res.Ingest.Sites,
		Channels:       len(res.Ingest.Channels),
		Windows:        len(res.Table.Windows),
		SkippedWindows: res.Table.SkippedWindows(),
		Features:       len(res.Model.Scaler.Names),
		Units:          res.Model.Map.Units(),
		Regimes:        len(res.Model.Regimes),
		Switches:       len(res.Switches),
		Unfamiliar:     unfamiliar,
		Revised:        res.revised,
	}
}

// regimeChoice words the choice of the number of regimes (choiceNote),
// with the option that tries the runner-up when the choice is marginal
// and, when areas no site held were folded as phases, the number that
// keeps every area found a regime: a number of regimes given is never
// folded.
func regimeChoice(c *mapper.Choice, phases []string) *RegimeChoice {
	rc := &RegimeChoice{Choice: *c, Note: choiceNote(c, phases)}
	if len(phases) > 0 {
		rc.Found = c.K + len(phases)
	}
	switch {
	case c.Marginal && len(phases) > 0:
		rc.Note += fmt.Sprintf(": re-run with %d regimes (mapper.Config.Regimes) to see the other, or with %d to keep every area found a regime (a number given is never folded)", c.RunnerUp, rc.Found)
	case c.Marginal:
		rc.Note += fmt.Sprintf(": re-run with %d regimes (mapper.Config.Regimes) to see the other", c.RunnerUp)
	case len(phases) > 0:
		rc.Note += fmt.Sprintf("; re-run with %d regimes (mapper.Config.Regimes) to keep every area found a regime (a number given is never folded)", rc.Found)
	}
	return rc
}

// choiceNote says how the number of regimes was reached and, after
// folding, which areas the sites did not hold (phases, one note each). The
// runner-up is a number of regimes of the grouping, which counts the
// phases as regimes, so the note states the regimes held and the phases
// first, then what the grouping found and its runner-up: "3 regimes held
// by the sites and 1 phase (…); the grouping: 4 regimes found; runner-up
// 5: …", never a runner-up beside the held count alone.
func choiceNote(c *mapper.Choice, phases []string) string {
	if len(phases) == 0 {
		return c.String()
	}
	found := *c
	found.K += len(phases)
	return fmt.Sprintf("%s held by the sites and %s (%s); the grouping: %s",
		counted(c.K, "regime"), counted(len(phases), "phase"), strings.Join(phases, "; "), found.String())
}

// counted writes n and noun, with an s unless n is 1.
func counted(n int, noun string) string {
	if n == 1 {
		return "1 " + noun
	}
	return fmt.Sprintf("%d %ss", n, noun)
}
