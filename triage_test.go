package kinmap_test

import (
	"fmt"
	"maps"
	"slices"
	"strings"
	"testing"
	"time"

	"github.com/kinmap/kinmap"
	"github.com/kinmap/kinmap/attention"
	"github.com/kinmap/kinmap/features"
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
// there as well), and such a pump ranks by its windows since its switch,
// which lie further towards the degrading regime than the steady regime's
// windows do (level nearing). A site listed as nearing a fault regime must
// truly end in one.
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
			t.Logf("seed %d: rank %d, %s: %s", seed, r.Rank, r.Site, r.Reason)
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

// familyFaults are the regimes of the evaluation family that a
// reliability engineer would mark fault: wear, fouling, stuck or iced
// sensors, leaks and derating (see the fleets in package scenarios).
var familyFaults = []string{"gearbox-wear", "filter-clogging", "fouled-oxygen-probe", "fouled-cooler", "bearing-wear",
	"stuck-probe", "iced-evaporator", "fan-fault", "stuck-humidity", "short-cycling", "iced-coil", "leaking-main",
	"derated", "iced-anemometer"}

// TestNearingFamily lists, on fleets of the evaluation family with each
// regime marked fault or normal after the true regime most of its windows
// hold, the sites the work list finds nearing a fault regime, and prints
// by fleet and draw: how many are listed, how many of them do not end in
// a planted fault, the sites that end in a planted fault while decoded in
// a regime marked normal (the faults the regimes hide) and how many of
// those are listed. Over all the fleets run, a listed site must end in a
// planted fault more often than a site the rule tests (one whose last
// stay, in a regime marked normal, began with a switch in the run):
// better than picking among them at random. KINMAP_FAMILY=name,... runs
// only the fleets named.
func TestNearingFamily(t *testing.T) {
	if testing.Short() {
		t.Skip("end-to-end runs")
	}
	var table strings.Builder
	fmt.Fprintf(&table, "%-12s %4s %7s %7s %7s %7s\n", "fleet", "seed", "nearing", "false", "hidden", "caught")
	var listedAll, listedTrue, tested, testedTrue int
	for _, name := range familyFleets(scenarios.Family()) {
		for _, seed := range []int64{1, scenarios.SecondSeed} {
			r := runFleet(t, name, seed)
			truth := map[string][]int{}
			for _, s := range r.fleet.Sites {
				truth[s.ID] = s.Regimes
			}
			votes := map[int]map[string]int{}
			last := map[string]features.Window{}
			for _, e := range r.res.Table.Windows {
				i := int(e.Start.Sub(r.fleet.WindowStart(0)) / r.fleet.Window)
				if votes[e.Regime] == nil {
					votes[e.Regime] = map[string]int{}
				}
				votes[e.Regime][r.fleet.Regimes[truth[e.Site][i]]]++
				last[e.Site] = e
			}
			in := attention.Input{Windows: r.res.Table.Windows, Switches: r.res.Switches, Shared: r.res.Shared,
				Status: map[int]string{}, Centroids: map[int][]float64{}}
			for _, g := range r.res.Model.Regimes {
				v := votes[g.ID]
				top := slices.MaxFunc(slices.Sorted(maps.Keys(v)), func(a, b string) int { return v[a] - v[b] })
				in.Status[g.ID] = attention.StatusNormal
				if slices.Contains(familyFaults, top) {
					in.Status[g.ID] = attention.StatusFault
				}
				in.Centroids[g.ID] = g.Centroid
			}
			faultAtEnd := func(site string) bool {
				e := last[site]
				return slices.Contains(familyFaults, r.fleet.Regimes[truth[site][int(e.Start.Sub(r.fleet.WindowStart(0))/r.fleet.Window)]])
			}
			// The sites whose last stay began with a switch in the run:
			// those that changed regime at all.
			switched := map[string]bool{}
			for i, e := range r.res.Table.Windows {
				if i > 0 && r.res.Table.Windows[i-1].Site == e.Site && r.res.Table.Windows[i-1].Regime != e.Regime {
					switched[e.Site] = true
				}
			}
			listed := map[string]bool{}
			nearing, wrong := 0, 0
			for _, row := range attention.Rank(in, attention.DefaultConfig()) {
				if row.Level != attention.Nearing {
					continue
				}
				nearing++
				listed[row.Site] = true
				if !faultAtEnd(row.Site) {
					wrong++
					t.Logf("%s seed %d: %s listed but not in a planted fault: %s", name, seed, row.Site, row.Reason)
				}
			}
			listedAll += nearing
			listedTrue += nearing - wrong
			hidden, caught := 0, 0
			for site, e := range last {
				if switched[site] && in.Status[e.Regime] == attention.StatusNormal {
					tested++
					if faultAtEnd(site) {
						testedTrue++
					}
				}
				if faultAtEnd(site) && in.Status[e.Regime] == attention.StatusNormal {
					hidden++
					if listed[site] {
						caught++
					}
				}
			}
			fmt.Fprintf(&table, "%-12s %4d %7d %7d %7d %7d\n", name, seed, nearing, wrong, hidden, caught)
		}
	}
	t.Logf("sites nearing a fault regime, regimes marked by their planted majority:\n%s", table.String())
	t.Logf("%d of %d listed sites end in a planted fault; %d of the %d sites tested", listedTrue, listedAll, testedTrue, tested)
	if listedAll > 0 && float64(listedTrue)/float64(listedAll) <= float64(testedTrue)/float64(max(tested, 1)) {
		t.Errorf("%d of %d listed sites end in a planted fault, no more often than %d of the %d sites tested", listedTrue, listedAll, testedTrue, tested)
	}
}
