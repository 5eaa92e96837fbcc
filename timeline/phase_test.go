package timeline

import (
	"math/rand/v2"
	"slices"
	"testing"

	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/mapper"
)

// A planted weekend phase: offices sit at regime 1 on weekdays and at
// regime 2 at weekends, factories at regime 3, and no site holds regime 2.
// The calendar decodes the weekends into regime 1, so regime 2 becomes a
// phase of regime 1; decoding the same windows with the folded model gives
// the same regimes (renumbered) and the same switches, to the confidence.
func TestBuildFoldedPhase(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 8))
	office := slices.Concat(officeWeek(1, 2), officeWeek(1, 2), officeWeek(1, 2), officeWeek(1, 2))
	seqs := map[string][]int{"o1": office, "o2": office, "o3": office, "o4": office,
		"f1": slices.Repeat([]int{3}, 28), "f2": slices.Repeat([]int{3}, 28),
		// A factory that turns office on day 12, a real switch.
		"f3": slices.Concat(slices.Repeat([]int{3}, 12), office[12:])}
	ws := sitesOf(seqs)
	for i := range ws {
		ws[i].x += 1.5 * rng.NormFloat64()
		ws[i].y += 1.5 * rng.NormFloat64()
	}
	before := inputs(ws)
	m := testModel()
	m.Choice = &mapper.Choice{K: 3}
	res, err := Build(m, before, Config{})
	if err != nil {
		t.Fatal(err)
	}
	phases := m.Fold(before)
	if len(phases) != 1 || phases[0].Before != 2 || phases[0].Of != 1 || len(m.Regimes) != 2 || m.Choice.K != 2 {
		t.Fatalf("phases %+v and %d regimes, want regime 2 a phase of 1 and 2 regimes", phases, len(m.Regimes))
	}
	ids := m.Compact()
	after := inputs(ws)
	folded, err := Build(m, after, Config{})
	if err != nil {
		t.Fatal(err)
	}
	for i := range before {
		if got, want := after[i].Regime, ids[before[i].Regime]; got != want {
			t.Errorf("site %s, %s: regime %d after folding, want %d", after[i].Site, after[i].Start.Format("Mon 2 Jan"), got, want)
		}
	}
	if len(folded.Switches) != len(res.Switches) || len(res.Switches) == 0 {
		t.Fatalf("%d switches after folding, %d before; want the same, at least f3's", len(folded.Switches), len(res.Switches))
	}
	for i, s := range res.Switches {
		s.From, s.To = ids[s.From], ids[s.To]
		if folded.Switches[i] != s {
			t.Errorf("switch %+v after folding, want %+v", folded.Switches[i], s)
		}
	}
}

// After folding, a window decoded into a phase reports as its regime, and
// a stay in the phase is no switch.
func TestBuildPhaseReportsHost(t *testing.T) {
	m := testModel()
	m.Fold([]features.Window{{Unit: 0, Regime: 1}, {Unit: 1, Regime: 1}, {Unit: 2, Regime: 3}})
	ws := inputs(series("s", 1, 1, 1, 2, 2, 2, 1, 1, 1))
	res, err := Build(m, ws, Config{})
	if err != nil {
		t.Fatal(err)
	}
	if got := regimesOf(ws, "s"); slices.ContainsFunc(got, func(r int) bool { return r != 1 }) || len(res.Switches) != 0 {
		t.Errorf("regimes %v with %d switches, want 1 throughout and none", got, len(res.Switches))
	}
}
