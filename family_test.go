package kinmap_test

import (
	"fmt"
	"math"
	"os"
	"slices"
	"strconv"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/kinmap/kinmap"
	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/mapper"
	"github.com/kinmap/kinmap/model"
	"github.com/kinmap/kinmap/scenarios"
	"github.com/kinmap/kinmap/score"
	"github.com/kinmap/kinmap/timeline"
)

// familyTolerance is how far a found switch may be from a true one: one
// daily window either way, the default tolerance of kinmap score.
const familyTolerance = 24 * time.Hour

// familyRun is one draw of one fleet run through the default pipeline, as
// a user would run it: kinmap.Train with DefaultOptions on the long
// Parquet dump and the site register.
type familyRun struct {
	name    string
	seed    int64
	fleet   *scenarios.Fleet
	res     *kinmap.Result
	seconds float64 // of Train alone
}

// familyCache holds the runs, so that the oracle and the defaults table
// share one training per fleet and draw within a test binary.
var familyCache struct {
	sync.Mutex
	runs map[string]*familyRun
}

// runFleet generates, writes and trains one draw of a fleet, once per
// test binary.
func runFleet(t *testing.T, name string, seed int64) *familyRun {
	t.Helper()
	key := name + "/" + strconv.FormatInt(seed, 10)
	familyCache.Lock()
	defer familyCache.Unlock()
	if r, ok := familyCache.runs[key]; ok {
		return r
	}
	spec, err := scenarios.DefaultSpec(name)
	if err != nil {
		t.Fatal(err)
	}
	spec.Seed = seed
	fleet, res := trainScenario(t, spec)
	var seconds float64 // the pipeline's own steps, as Train timed them
	for _, v := range res.Info.Timings {
		seconds += v
	}
	r := &familyRun{name: name, seed: seed, fleet: fleet, res: res, seconds: seconds}
	if familyCache.runs == nil {
		familyCache.runs = map[string]*familyRun{}
	}
	familyCache.runs[key] = r
	return r
}

// truthOf returns the true windows and switches of a fleet for package
// score.
func truthOf(f *scenarios.Fleet) ([]score.Window, []score.Event) {
	var windows []score.Window
	for _, s := range f.Sites {
		for i, r := range s.Regimes {
			windows = append(windows, score.Window{Site: s.ID, Start: f.WindowStart(i), Regime: f.Regimes[r]})
		}
	}
	var events []score.Event
	for _, sw := range f.Switches() {
		events = append(events, score.Event{Site: sw.Site, Time: sw.Time})
	}
	return windows, events
}

// scoreTimelines scores decoded entries and switches against the truth of
// a fleet.
func scoreTimelines(f *scenarios.Fleet, ws []features.Window, switches []timeline.Switch) score.Report {
	return scoreWithin(f, ws, switches, familyTolerance)
}

// scoreWithin is scoreTimelines with switches matched within tol.
func scoreWithin(f *scenarios.Fleet, ws []features.Window, switches []timeline.Switch, tol time.Duration) score.Report {
	truth, trueEvents := truthOf(f)
	found := make([]score.Window, len(ws))
	for i, e := range ws {
		found[i] = score.Window{Site: e.Site, Start: e.Start, Regime: strconv.Itoa(e.Regime)}
	}
	events := make([]score.Event, len(switches))
	for i, s := range switches {
		events[i] = score.Event{Site: s.Site, Time: s.Time}
	}
	return score.Compare(truth, found, trueEvents, events, tol)
}

// trueRegimeModel returns the model of run r with its regimes replaced by
// the true ones: each centroid the mean scaled vector of the windows of
// that true regime (NaN components left out), numbered from 1 in the
// fleet's order. The map, its quantization errors and hence the automatic
// switch cost stay those of the default run.
func trueRegimeModel(t *testing.T, r *familyRun) *model.Model {
	t.Helper()
	f, res := r.fleet, r.res
	regimeOf := map[string][]int{}
	for _, s := range f.Sites {
		regimeOf[s.ID] = s.Regimes
	}
	_, dim := res.X.Dims()
	sums := make([][]float64, len(f.Regimes))
	counts := make([][]float64, len(f.Regimes))
	for k := range sums {
		sums[k], counts[k] = make([]float64, dim), make([]float64, dim)
	}
	for i, w := range res.Table.Windows {
		k := regimeOf[w.Site][int(w.Start.Sub(f.WindowStart(0))/f.Window)]
		for j, v := range res.X.RawRowView(i) {
			if !math.IsNaN(v) {
				sums[k][j] += v
				counts[k][j]++
			}
		}
	}
	m := *res.Model
	m.Regimes = nil
	for k := range sums {
		c := make([]float64, dim)
		for j := range c {
			c[j] = sums[k][j] / counts[k][j]
		}
		if slices.ContainsFunc(c, math.IsNaN) {
			t.Fatalf("%s seed %d: regime %s has a feature no window of it defines", r.name, r.seed, f.Regimes[k])
		}
		m.Regimes = append(m.Regimes, mapper.Regime{ID: k + 1, Centroid: c})
	}
	return &m
}

// oracle decodes run r against the true regimes' centroids with the
// default timeline settings and scores the result.
func oracle(t *testing.T, r *familyRun) score.Report {
	t.Helper()
	m := trueRegimeModel(t, r)
	ws := slices.Clone(r.res.Table.Windows) // decoded anew, leaving the run's regimes
	dec, err := timeline.Build(m, ws, timeline.DefaultConfig())
	if err != nil {
		t.Fatal(err)
	}
	return scoreTimelines(r.fleet, ws, dec.Switches)
}

// familyFleets returns the fleets of names that the environment variable
// KINMAP_FAMILY (a comma-separated list) names, or all of them when it is
// unset, so that one fleet can be looked at alone.
func familyFleets(names []string) []string {
	only := os.Getenv("KINMAP_FAMILY")
	if only == "" {
		return names
	}
	var out []string
	for _, n := range names {
		if slices.Contains(strings.Split(only, ","), n) {
			out = append(out, n)
		}
	}
	return out
}

// familySeeds returns the draws to run: seed 1 and scenarios.SecondSeed,
// or those that the environment variable KINMAP_FAMILY_SEEDS (a
// comma-separated list) names, so that the defaults can be checked on
// draws no change was made for.
func familySeeds(t *testing.T) []int64 {
	t.Helper()
	only := os.Getenv("KINMAP_FAMILY_SEEDS")
	if only == "" {
		return []int64{1, scenarios.SecondSeed}
	}
	var out []int64
	for _, s := range strings.Split(only, ",") {
		seed, err := strconv.ParseInt(strings.TrimSpace(s), 10, 64)
		if err != nil {
			t.Fatalf("KINMAP_FAMILY_SEEDS: %q is not a seed", s)
		}
		out = append(out, seed)
	}
	return out
}

// TestFamilyOracle checks that every fleet of the evaluation family can be
// solved from the default features: decoding each window against the
// centroids of the true regimes, with kinmap's Viterbi and the default
// switch cost, reaches an ARI of at least 0.9 and a switch F1 of at least
// 0.9 within one day, on both draws. A fleet that fails is impossible, not
// hard, and must be fixed in package scenarios.
func TestFamilyOracle(t *testing.T) {
	if testing.Short() {
		t.Skip("end-to-end runs")
	}
	var table strings.Builder
	fmt.Fprintf(&table, "%-12s %4s %6s %7s %6s %6s %6s\n", "fleet", "seed", "true K", "ARI", "P", "R", "F1")
	for _, name := range familyFleets(scenarios.Family()) {
		for _, seed := range familySeeds(t) {
			r := runFleet(t, name, seed)
			rep := oracle(t, r)
			sw := rep.Found.Switches
			fmt.Fprintf(&table, "%-12s %4d %6d %7.3f %6.3f %6.3f %6.3f\n", name, seed, len(r.fleet.Regimes), rep.Found.ARI, sw.Precision, sw.Recall, sw.F1)
			if rep.Found.ARI < 0.9 || sw.F1 < 0.9 {
				t.Errorf("%s seed %d: the true regimes decode to ARI %.3f and switch F1 %.3f (%d true, %d found, %d matched); want both at least 0.9",
					name, seed, rep.Found.ARI, sw.F1, rep.TrueSwitches, sw.TP+sw.FP, sw.TP)
			}
		}
	}
	t.Logf("decoding against the true regimes, default switch cost, tolerance ±1 day:\n%s", table.String())
}

// TestFamilyDefaults runs the default pipeline on every fleet of the
// evaluation family, both draws, and on "pumping" and "reefers", and
// prints a table: fleet, seed, true K, chosen K, ARI, switch precision,
// recall and F1 within one day, recall on the true day (R0), and the
// seconds Train took. Run it with
//
//	go test -run TestFamilyDefaults -v .
//
// The targets of the family (ARI ≥ 0.9 and switch F1 ≥ 0.9 on every fleet
// and draw, the true number of regimes chosen on at least 80 % of them,
// and one regime without a switch on the homogeneous fleet "tanks") are
// not met yet; they are asserted only with KINMAP_FAMILY_TARGETS=1, and
// otherwise the misses are logged. KINMAP_FAMILY=name,... runs only the
// fleets named; the share of true numbers of regimes counts those.
// KINMAP_FAMILY_SEEDS=3,4 runs other draws.
func TestFamilyDefaults(t *testing.T) {
	if testing.Short() {
		t.Skip("end-to-end runs")
	}
	assert := os.Getenv("KINMAP_FAMILY_TARGETS") == "1"
	var table strings.Builder
	fmt.Fprintf(&table, "%-12s %4s %6s %8s %7s %6s %6s %6s %6s %7s\n", "fleet", "seed", "true K", "chosen K", "ARI", "P", "R", "F1", "R0", "seconds")
	var misses []string
	runs, rightK := 0, 0
	for _, name := range familyFleets(append(scenarios.Family(), "pumping", "reefers")) {
		for _, seed := range familySeeds(t) {
			r := runFleet(t, name, seed)
			rep := scoreTimelines(r.fleet, r.res.Table.Windows, r.res.Switches)
			sw := rep.Found.Switches
			chosen := len(r.res.Model.Regimes)
			exact := scoreWithin(r.fleet, r.res.Table.Windows, r.res.Switches, 0).Found.Switches.Recall
			fmt.Fprintf(&table, "%-12s %4d %6d %8d %7.3f %6.3f %6.3f %6.3f %6.3f %7.1f\n",
				name, seed, len(r.fleet.Regimes), chosen, rep.Found.ARI, sw.Precision, sw.Recall, sw.F1, exact, r.seconds)
			if !slices.Contains(scenarios.Family(), name) {
				continue // pumping and reefers have targets of their own
			}
			runs++
			if chosen == len(r.fleet.Regimes) {
				rightK++
			}
			if rep.Found.ARI < 0.9 || sw.F1 < 0.9 {
				misses = append(misses, fmt.Sprintf("%s seed %d: ARI %.3f, switch F1 %.3f; want both at least 0.9", name, seed, rep.Found.ARI, sw.F1))
			}
			if len(r.fleet.Regimes) == 1 && (chosen != 1 || len(r.res.Switches) != 0) {
				misses = append(misses, fmt.Sprintf("%s seed %d: a homogeneous fleet got %d regimes and %d switches; want 1 and none", name, seed, chosen, len(r.res.Switches)))
			}
		}
	}
	if float64(rightK) < 0.8*float64(runs) {
		misses = append(misses, fmt.Sprintf("the true number of regimes chosen on %d of %d runs; want at least 80 %%", rightK, runs))
	}
	t.Logf("default pipeline, tolerance ±1 day:\n%s", table.String())
	for _, m := range misses {
		if assert {
			t.Error(m)
		} else {
			t.Log("target missed: " + m)
		}
	}
}
