package export

import (
	"fmt"
	"slices"

	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/model"
)

// labelsSection is the report's section on the regimes in engineering
// terms: each regime's name, status and typical levels, and the meaning
// of the statistics the descriptions name.
type labelsSection struct {
	Regimes     []labelledRegime
	Labelled    bool // some regime has a name or status
	Definitions []features.Definition
}

type labelledRegime struct {
	ID           int
	Name, Status string
	Levels       []string // "flow 12 m3/h (48)"
}

// labelsData builds the section from the model of r, whose descriptions
// have been written (described).
func labelsData(r *Run) *labelsSection {
	s := &labelsSection{Labelled: model.Labelled(r.Model.Regimes)}
	used := map[string]bool{}
	for _, g := range r.Model.Regimes {
		lr := labelledRegime{ID: g.ID, Name: g.Name, Status: g.Status}
		for _, l := range regimeLevels(r.Levels, g) {
			f := fleetLevel(r.Levels, l.Channel)
			lr.Levels = append(lr.Levels, fmt.Sprintf("%s %s (%s) [fleet %s (%s)]", l.Channel,
				withUnit(l.Median, r.Levels.Units[l.Channel]), number(l.P95), number(f.Median), number(f.P95)))
		}
		s.Regimes = append(s.Regimes, lr)
		for _, t := range g.Traits {
			used[features.StatOf(t.Feature)] = true
		}
	}
	s.Definitions = slices.DeleteFunc(features.Definitions(), func(d features.Definition) bool { return !used[d.Stat] })
	return s
}
