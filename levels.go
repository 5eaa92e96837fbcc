package kinmap

import (
	"fmt"
	"maps"
	"slices"

	"github.com/kinmap/kinmap/export"
	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/ingest"
	"github.com/kinmap/kinmap/mapper"
)

// levels computes the typical raw levels of the model's channels in each
// decoded regime of the run and over all its windows (features.Levels on
// the readings of ds), with the channels' units (channelUnits).
func (r *Result) levels(o *Options, ds *ingest.Dataset) *export.Levels {
	channels := features.Channels(r.Model.FeatureNames)
	ids := make([]int, 0, len(r.Model.Regimes))
	for _, g := range r.Model.Regimes {
		ids = append(ids, g.ID)
	}
	group := make([]int, len(r.Entries))
	for i, e := range r.Entries {
		group[i] = slices.Index(ids, e.Regime) // -1 for a window without regime
	}
	byGroup, fleet := features.Levels(ds, r.Table.Windows, group, len(ids), channels)
	lv := &export.Levels{Regimes: make(map[int][]features.Level, len(ids)), Fleet: fleet, Units: channelUnits(r.Model, r.Ingest.Units, o.Units)}
	for g, id := range ids {
		lv.Regimes[id] = byGroup[g]
	}
	for _, ch := range slices.Sorted(maps.Keys(o.Units)) {
		if !slices.Contains(channels, ch) {
			r.Info.Warnings = append(r.Info.Warnings, fmt.Sprintf("a unit is given for channel %q, which the model does not use (its channels: %v)", ch, channels))
		}
	}
	return lv
}

// channelUnits returns the units of the channels: those model m records,
// replaced by those the dump's field metadata gives, replaced by those
// given in the options.
func channelUnits(m *mapper.Model, dump, given map[string]string) map[string]string {
	u := map[string]string{}
	maps.Copy(u, m.Units)
	maps.Copy(u, dump)
	maps.Copy(u, given)
	return u
}
