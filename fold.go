package kinmap

import (
	"cmp"
	"slices"

	"github.com/kinmap/kinmap/model"
	"github.com/kinmap/kinmap/timeline"
)

// fold makes each regime that no site holds after decoding a phase of the
// regime its windows decoded into (model.Model.Fold), unless the user set
// the number of regimes, and says which area was folded into which regime
// in the log; the run summary says it too (regimeChoice). A new map's
// regimes are then numbered 1, 2, … in the windows, switches and shared
// conditions; an update keeps its numbers. The decoding is not repeated:
// a phase keeps its centroid as a state of the decoding, so the windows'
// regimes are those just decoded.
func (r *Result) fold(o *Options) {
	if o.Map.Regimes != 0 || r.Info.Command != "run" && r.Info.Command != "update" {
		return
	}
	m := *r.Model
	m.UnitRegime = append([]int(nil), m.UnitRegime...)
	m.Phases = append([]model.Phase(nil), m.Phases...)
	phases := m.Fold(r.Table.Windows)
	if len(phases) == 0 {
		return
	}
	for _, n := range m.PhaseNotes()[len(m.Phases)-len(phases):] {
		o.logf("regimes: %s", n)
	}
	r.Model = &m
	// A shared condition whose sites looked like an area now folded looked
	// like that area's host; like their own regime's phase is no change.
	host := map[int]int{}
	for _, p := range phases {
		host[p.Before] = p.Of
	}
	r.Shared = slices.DeleteFunc(r.Shared, func(s timeline.Shared) bool {
		return cmp.Or(host[s.Like], s.Like) == s.Regime
	})
	for i := range r.Shared {
		r.Shared[i].Like = cmp.Or(host[r.Shared[i].Like], r.Shared[i].Like)
	}
	if r.Info.Command != "run" {
		return
	}
	ids := m.Compact()
	for i := range r.Table.Windows {
		r.Table.Windows[i].Regime = ids[r.Table.Windows[i].Regime]
	}
	for i := range r.Switches {
		s := &r.Switches[i]
		s.From, s.To = ids[s.From], ids[s.To]
	}
	for i := range r.Shared {
		s := &r.Shared[i]
		s.Regime, s.Like = ids[s.Regime], ids[s.Like]
	}
	// The numbers changed, and with them the lineage they are named by.
	// The run writes its windows under that lineage, so it reads the
	// earlier runs' switches and stays under it too: the same dump run
	// again then finds its own switches reported, not news. The decoding
	// continued from the history under the lineage before folding; a new
	// map meets its folded lineage in the history when its own dump is run
	// again, which has no windows before its own to continue from.
	m.Lineage = ""
	m.Lineage = m.LineageOrDerived()
	if r.history != nil {
		r.past = pastOf(r.history, m.Lineage)
	}
}
