package kinmap_test

import (
	"fmt"
	"maps"
	"slices"
	"testing"
	"time"

	"github.com/kinmap/kinmap"
	"github.com/kinmap/kinmap/attention"
	"github.com/kinmap/kinmap/scenarios"
)

// pumpingFaults are the regimes of the pumping scenario that a reliability
// engineer would mark fault: a degrading pump and a stuck transmitter (see
// the package documentation of scenarios).
var pumpingFaults = []string{"degrading", "stuck-sensor"}

// On the pumping fleet with its planted faults, with each regime marked
// fault or normal after the true regime most of its windows hold (as a
// user labels a map), every switch found into a fault regime ranks above
// every switch between normal regimes in the work list of the next assign.
// Two draws of the fleet. The target, every planted switch into a
// fault regime above every switch between normal regimes, holds too: the
// first days of a pump's degradation lie nearer the steady regime than the
// degrading one (decoding against the true regimes' centroids puts them
// there as well), and such a pump ranks by its move towards the degrading
// regime (level nearing) instead. A site listed as nearing a fault regime
// must truly end in one.
func TestTriagePlantedFaults(t *testing.T) {
	if testing.Short() {
		t.Skip("end-to-end run")
	}
	for _, seed := range []int64{1, 2} {
		spec, err := scenarios.DefaultSpec("pumping")
		if err != nil {
			t.Fatal(err)
		}
		spec.Sites, spec.Seed = 120, seed
		fleet, res := trainScenario(t, spec)

		// Label each regime by the true regime most of its windows hold.
		votes := map[int]map[string]int{}
		truth := map[string][]int{}
		for _, s := range fleet.Sites {
			truth[s.ID] = s.Regimes
		}
		for _, e := range res.Table.Windows {
			i := int(e.Start.Sub(fleet.WindowStart(0)) / fleet.Window)
			if votes[e.Regime] == nil {
				votes[e.Regime] = map[string]int{}
			}
			votes[e.Regime][fleet.Regimes[truth[e.Site][i]]]++
		}
		m := *res.Model
		m.Regimes = slices.Clone(m.Regimes)
		status := map[int]string{}
		for i := range m.Regimes {
			g := &m.Regimes[i]
			v := votes[g.ID]
			top := slices.MaxFunc(slices.Sorted(maps.Keys(v)), func(a, b string) int { return v[a] - v[b] })
			g.Status = attention.StatusNormal
			if slices.Contains(pumpingFaults, top) {
				g.Status = attention.StatusFault
			}
			status[g.ID] = g.Status
		}
		o := kinmap.DefaultOptions()
		o.Data = []string{res.Info.Inputs[0].Path}
		o.Sites = res.Info.Register
		next, err := kinmap.Assign(o, &m)
		if err != nil {
			t.Fatal(err)
		}

		// The mechanism: every switch kinmap found into a regime marked
		// fault ranks above every switch between normal regimes.
		bestNormal, normals := len(next.Attention)+1, 0
		for _, r := range next.Attention {
			if !r.Time.IsZero() && status[r.From] == attention.StatusNormal && status[r.To] == attention.StatusNormal {
				normals++
				bestNormal = min(bestNormal, r.Rank)
			}
		}
		rankOf := map[string]int{}
		for _, r := range next.Attention {
			for _, s := range r.Sites {
				rankOf[s] = r.Rank
			}
		}
		found := 0
		for _, sw := range next.Switches {
			if status[sw.To] != attention.StatusFault {
				continue
			}
			found++
			if r, ok := rankOf[sw.Site]; !ok || r >= bestNormal {
				t.Errorf("seed %d: the switch of %s into fault regime %d ranks %d (0: absent), not above the first switch between normal regimes at %d", seed, sw.Site, sw.To, r, bestNormal)
			}
		}
		// The planted faults: each must rank above every switch between
		// normal regimes, by its switch into a regime marked fault or by
		// its move towards one.
		var faults, above int
		for _, sw := range fleet.Switches() {
			if !slices.Contains(pumpingFaults, fleet.Regimes[sw.To]) {
				continue
			}
			faults++
			rank, ok := rankOf[sw.Site]
			if ok && rank < bestNormal {
				above++
				continue
			}
			why := "not in the list"
			if ok {
				r := next.Attention[rank-1]
				why = fmt.Sprintf("rank %d, level %s: %s", rank, r.Level, r.Reason)
			}
			t.Errorf("seed %d: planted switch of %s from %s to %s on %s: %s", seed, sw.Site, fleet.Regimes[sw.From], fleet.Regimes[sw.To], sw.Time.Format(time.DateOnly), why)
		}
		// A site listed as moving towards a fault regime is one whose
		// planted regime at its last window is a fault.
		nearing := 0
		for _, r := range next.Attention {
			if r.Level != attention.Nearing {
				continue
			}
			nearing++
			if last := truth[r.Site][len(truth[r.Site])-1]; !slices.Contains(pumpingFaults, fleet.Regimes[last]) {
				t.Errorf("seed %d: %s is listed as %s (%s), but its last planted regime is %s", seed, r.Site, r.Level, r.Reason, fleet.Regimes[last])
			}
		}
		t.Logf("seed %d: %d regimes; %d sites moving towards a fault regime; %d switches found into fault regimes; %d of %d planted fault switches rank above the %d rows set by a switch between normal regimes (first at rank %d); %d rows in all",
			seed, len(m.Regimes), nearing, found, above, faults, normals, bestNormal, len(next.Attention))
		if found == 0 || normals == 0 {
			t.Errorf("seed %d: the test needs both kinds of switch", seed)
		}
	}
}
