package model

import (
	"fmt"
	"maps"
	"math"
	"slices"
	"strings"

	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/mapper"
	"gonum.org/v1/gonum/floats"
)

// Phase is an area of the map that the grouping found as a regime but that
// no site held after decoding: a calendar phase of another regime (an
// office's weekend) or a condition its sites share (cold days), which the
// decoding scores against this area while the sites stay in their regime
// (see timeline.Build). The model keeps its centroid so that decoding is
// the same as with the regime it was; outputs count only held regimes, and
// UnitRegime and the host regime's Units give its units to the host.
type Phase struct {
	Of     int // ID of the regime it is a phase of
	Before int // number it had as a regime when it was found
	mapper.Regime
}

// States returns the states a timeline is decoded in, the regimes and then
// the phases, and for each state the index in it of the regime it reports
// as: itself for a regime, its host for a phase.
func (m *Model) States() (states []mapper.Regime, report []int) {
	states = slices.Clone(m.Regimes)
	report = make([]int, len(m.Regimes), len(m.Regimes)+len(m.Phases))
	for k := range report {
		report[k] = k
	}
	for _, p := range m.Phases {
		states = append(states, p.Regime)
		report = append(report, slices.IndexFunc(m.Regimes, func(r mapper.Regime) bool { return r.ID == p.Of }))
	}
	return states, report
}

// Fold makes every regime that none of the decoded windows ws holds a phase
// of the regime that holds most of the windows whose best-matching unit
// lies in it (the first in the model's order on a tie; with no such
// window, the regime of the nearest centroid), and returns the phases
// made; none when every regime is held. The windows must carry their
// decoded regime and unit. A number of regimes the user asked for is kept
// by not calling it.
//
// A regime of the fleet is a state that sites hold for days (the
// definition the grouping tests, see mapper.FindRegimes); an area no site
// is ever decoded into is, by that definition, part of the regime whose
// sites' windows it describes. Its centroid stays a state of the decoding
// (States), which keeps the decoding of ws as it was. This is how mixture
// components are combined into clusters: each component keeps its part in
// the likelihood and a cluster is the union of components, merged where
// the assignments of the data say they belong together (J.-P. Baudry,
// A. E. Raftery, G. Celeux, K. Lo and R. Gottardo, "Combining mixture
// components for clustering", J. Comput. Graph. Stat. 19(2), 2010;
// C. Hennig, "Methods for merging Gaussian mixture components", Adv. Data
// Anal. Classif. 4, 2010; cited from memory). Here the assignments are the
// decoded timelines, and a component none of them holds is merged whole.
func (m *Model) Fold(ws []features.Window) []Phase {
	held := map[int]int{}
	into := map[[2]int]int{} // (regime of the unit, decoded regime) → windows
	for _, w := range ws {
		held[w.Regime]++
		if w.Unit >= 0 && w.Unit < len(m.UnitRegime) {
			into[[2]int{m.UnitRegime[w.Unit], w.Regime}]++
		}
	}
	var keep []mapper.Regime
	for _, r := range m.Regimes {
		if held[r.ID] > 0 {
			keep = append(keep, r)
		}
	}
	if len(keep) == len(m.Regimes) || len(keep) == 0 {
		return nil
	}
	hosts := map[int]int{}
	for _, r := range m.Regimes {
		if held[r.ID] > 0 {
			continue
		}
		host, most := -1, 0
		for k, h := range keep {
			if n := into[[2]int{r.ID, h.ID}]; n > most {
				host, most = k, n
			}
		}
		if host < 0 {
			host = nearest(r.Centroid, keep)
		}
		hosts[r.ID] = keep[host].ID
	}
	made := m.fold(hosts)
	return m.Phases[len(m.Phases)-made:]
}

// Compact numbers the regimes 1, 2, … in their order and the phases after
// them, and returns the renumbering (old number to new) of both.
func (m *Model) Compact() map[int]int {
	ids := make([]int, len(m.Regimes))
	renumbered := map[int]int{}
	for k, r := range m.Regimes {
		ids[k] = k + 1
		renumbered[r.ID] = k + 1
	}
	// Renumber cannot fail: the numbers are 1…K, distinct.
	_ = m.Renumber(ids)
	for j := range m.Phases {
		p := &m.Phases[j]
		renumbered[p.ID] = len(m.Regimes) + j + 1
		p.ID = len(m.Regimes) + j + 1
	}
	return renumbered
}

// fold makes each regime whose number hosts has a phase of the regime
// hosts gives it: its units go to the host in UnitRegime and the host's
// Units, its centroid stays. It returns the number of phases made.
func (m *Model) fold(hosts map[int]int) int {
	var keep []mapper.Regime
	made := 0
	for _, r := range m.Regimes {
		of, ok := hosts[r.ID]
		if !ok {
			keep = append(keep, r)
			continue
		}
		m.Phases = append(m.Phases, Phase{Of: of, Before: r.ID, Regime: r})
		made++
	}
	for k := range keep {
		for _, p := range m.Phases[len(m.Phases)-made:] {
			if p.Of == keep[k].ID {
				keep[k].Units = append(slices.Clone(keep[k].Units), p.Units...)
				slices.Sort(keep[k].Units)
			}
		}
	}
	for u, id := range m.UnitRegime {
		if of, ok := hosts[id]; ok {
			m.UnitRegime[u] = of
		}
	}
	m.Regimes = keep
	if m.Choice != nil && made > 0 {
		c := *m.Choice
		c.K = len(keep)
		m.Choice = &c
	}
	return made
}

// nearest returns the index of the regime of rs whose centroid is nearest
// to c.
func nearest(c []float64, rs []mapper.Regime) int {
	best, bd := 0, math.Inf(1)
	for k, r := range rs {
		if d := floats.Distance(r.Centroid, c, 2); d < bd {
			best, bd = k, d
		}
	}
	return best
}

// adjacent reports whether the phase's units touch those of its host on
// the lattice of m (Ward's regions are connected, a phase found as one of
// them usually borders the regime it is folded into).
func (m *Model) adjacent(p Phase) bool {
	for _, u := range p.Units {
		for _, v := range m.Map.Lattice.Neighbours(u) {
			if m.UnitRegime[v] == p.Of && !slices.Contains(p.Units, v) {
				return true
			}
		}
	}
	return false
}

// describe says in a sentence which area was folded as a phase of which
// regime, and whether it borders it on the map.
func (p Phase) describe(adjacent bool) string {
	where := "next to it on the map"
	if !adjacent {
		where = "not adjacent to it on the map"
	}
	return fmt.Sprintf("the area found as regime %d (%d units, %s) is a phase of regime %d, %s: no site held it after decoding, and its windows decoded into regime %d",
		p.Before, len(p.Units), strings.TrimSpace(p.Description), p.Of, where, p.Of)
}

// PhaseNotes says of each phase of m which area was folded into which
// regime, in the order the phases were made.
func (m *Model) PhaseNotes() []string {
	out := make([]string, len(m.Phases))
	for i, p := range m.Phases {
		out[i] = p.describe(m.adjacent(p))
	}
	return out
}

// checkPhases verifies that each phase has a distinct number, a centroid
// of the map's dimension and units that UnitRegime gives to its host.
func (m *Model) checkPhases(regimes map[int]bool) error {
	ids := maps.Clone(regimes)
	for _, p := range m.Phases {
		switch {
		case ids[p.ID]:
			return fmt.Errorf("phase %d has the number of a regime or another phase", p.ID)
		case !regimes[p.Of]:
			return fmt.Errorf("phase %d is a phase of regime %d, which the model does not have", p.ID, p.Of)
		case len(p.Centroid) != m.Map.Dim:
			return fmt.Errorf("phase %d has a centroid of dimension %d, the map %d", p.ID, len(p.Centroid), m.Map.Dim)
		}
		for _, v := range p.Centroid {
			if !finite(v) {
				return fmt.Errorf("phase %d: centroid value %g is not a finite number", p.ID, v)
			}
		}
		for _, u := range p.Units {
			if u < 0 || u >= len(m.UnitRegime) || m.UnitRegime[u] != p.Of {
				return fmt.Errorf("phase %d lists unit %d, which is not one of regime %d's units", p.ID, u, p.Of)
			}
		}
		ids[p.ID] = true
	}
	return nil
}
