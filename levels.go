package kinmap

import (
	"fmt"
	"maps"
	"slices"

	"github.com/kinmap/kinmap/export"
	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/ingest"
	"github.com/kinmap/kinmap/model"
)

// levels computes the typical raw levels of the model's channels in each
// decoded regime of the run and over all its windows (features.Levels on
// the readings of ds).
func (r *Result) levels(o *Options, ds *ingest.Dataset) {
	group, k := r.LevelGroups()
	byGroup, fleet := features.Levels(ds, r.Table.Windows, group, k, features.Channels(r.Model.FeatureNames))
	r.SetLevels(o, byGroup, fleet)
}

// LevelGroups returns the group of each window of the run for
// features.Levels: the index in Model.Regimes of its decoded regime, -1
// for none; k is the number of regimes.
func (r *Result) LevelGroups() (group []int, k int) {
	ids := make([]int, len(r.Model.Regimes))
	for i, g := range r.Model.Regimes {
		ids[i] = g.ID
	}
	group = make([]int, len(r.Table.Windows))
	for i, w := range r.Table.Windows {
		group[i] = slices.Index(ids, w.Regime)
	}
	return group, len(ids)
}

// SetLevels sets the run's regime levels from the levels of each group of
// LevelGroups and of all windows, as features.Levels returns them for the
// channels of the model, with the channels' units (channelUnits); a
// runner that reads the dump elsewhere, as the Beam path does, computes
// them there. A unit given in o for a channel the model does not use is
// warned about.
func (r *Result) SetLevels(o *Options, byGroup [][]features.Level, fleet []features.Level) {
	channels := features.Channels(r.Model.FeatureNames)
	lv := &export.Levels{Regimes: make(map[int][]features.Level, len(r.Model.Regimes)), Fleet: fleet, Units: channelUnits(r.Model, r.Ingest.Units, o.Units)}
	kept := &model.Levels{Regimes: make(map[int][]features.Level, len(r.Model.Regimes)), Fleet: withReadings(fleet)}
	for g, reg := range r.Model.Regimes {
		lv.Regimes[reg.ID] = byGroup[g]
		kept.Regimes[reg.ID] = withReadings(byGroup[g])
	}
	// The model keeps them, so that "kinmap label" describes the regimes
	// as the outputs do; a copy, as the caller may hold the model.
	m := *r.Model
	m.Levels = kept
	r.Model = &m
	for _, ch := range slices.Sorted(maps.Keys(o.Units)) {
		if !slices.Contains(channels, ch) {
			r.Info.Warnings = append(r.Info.Warnings, fmt.Sprintf("a unit is given for channel %q, which the model does not use (its channels: %v)", ch, channels))
		}
	}
	r.Levels = lv
}

// withReadings returns the levels of the channels with readings.
func withReadings(ls []features.Level) []features.Level {
	var out []features.Level
	for _, l := range ls {
		if l.Readings > 0 {
			out = append(out, l)
		}
	}
	return out
}

// channelUnits returns the units of the channels: those model m records,
// replaced by those the dump's field metadata gives, replaced by those
// given in the options.
func channelUnits(m *model.Model, dump, given map[string]string) map[string]string {
	u := map[string]string{}
	maps.Copy(u, m.Units)
	maps.Copy(u, dump)
	maps.Copy(u, given)
	return u
}
