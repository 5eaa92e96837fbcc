package kinmap_test

import (
	"fmt"
	"os"
	"strconv"
	"strings"
	"testing"

	"github.com/kinmap/kinmap"
	"github.com/kinmap/kinmap/scenarios"
	"github.com/kinmap/kinmap/score"
)

// evalRun is how kinmap with its defaults did on one generated fleet.
type evalRun struct {
	fleet                string
	seed                 int64
	k, trueK             int
	ari                  float64
	found, planted, hits int
	seconds              float64
	splits               string
}

// precision is the share of found switches that match a planted one; 1
// when none was found.
func (e evalRun) precision() float64 {
	if e.found == 0 {
		return 1
	}
	return float64(e.hits) / float64(e.found)
}

// recall is the share of planted switches found; 1 when none was planted.
func (e evalRun) recall() float64 {
	if e.planted == 0 {
		return 1
	}
	return float64(e.hits) / float64(e.planted)
}

// f1 is the harmonic mean of precision and recall, 2·hits/(found+planted);
// 1 when there was no switch to find and none was found.
func (e evalRun) f1() float64 {
	if e.found+e.planted == 0 {
		return 1
	}
	return 2 * float64(e.hits) / float64(e.found+e.planted)
}

func (e evalRun) String() string {
	return fmt.Sprintf("%-11s seed %d: K %2d (true %d)  ARI %.3f  switches P %.2f R %.2f F1 %.2f (%d found, %d planted)  %.1fs  splits%s",
		e.fleet, e.seed, e.k, e.trueK, e.ari, e.precision(), e.recall(), e.f1(), e.found, e.planted, e.seconds, e.splits)
}

// evaluate runs kinmap with its defaults on a scenario of the given seed
// and scores it against the truth: ARI of the window regimes (Hubert and
// Arabie 1985) and switches matched within one window.
func evaluate(t *testing.T, name string, seed int64) evalRun {
	t.Helper()
	spec, err := scenarios.DefaultSpec(name)
	if err != nil {
		t.Fatal(err)
	}
	spec.Seed = seed
	fleet, res := trainScenario(t, spec)
	truth := map[string][]int{}
	for _, s := range fleet.Sites {
		truth[s.ID] = s.Regimes
	}
	var want, got []int
	for _, e := range res.Table.Windows {
		i := int(e.Start.Sub(fleet.WindowStart(0)) / fleet.Window)
		want = append(want, truth[e.Site][i])
		got = append(got, e.Regime)
	}
	var planted, found []score.Event
	for _, sw := range fleet.Switches() {
		planted = append(planted, score.Event{Site: sw.Site, Time: sw.Time})
	}
	for _, sw := range res.Switches {
		found = append(found, score.Event{Site: sw.Site, Time: sw.Time})
	}
	var secs float64
	for _, v := range res.Info.Timings {
		secs += v
	}
	return evalRun{
		fleet: name, seed: seed, k: len(res.Model.Regimes), trueK: len(fleet.Regimes),
		ari: score.ARI(want, got), found: len(found), planted: len(planted),
		hits: score.Switches(planted, found, fleet.Window).TP, seconds: secs,
		splits: splitText(res),
	}
}

// TestEvaluateScenarios prints how the defaults do on the scenarios named
// in KINMAP_EVAL (for example "pumping:1,2 reefers:1,2"); a tool for
// developing the regime finder, skipped otherwise.
func TestEvaluateScenarios(t *testing.T) {
	spec := os.Getenv("KINMAP_EVAL")
	if spec == "" {
		t.Skip("set KINMAP_EVAL")
	}
	for _, item := range strings.Fields(spec) {
		name, seeds, _ := strings.Cut(item, ":")
		for _, s := range strings.Split(seeds, ",") {
			seed, _ := strconv.ParseInt(s, 10, 64)
			t.Log(evaluate(t, name, seed))
		}
	}
}

// splitText lists the splits of the regime choice: K after each, segments
// tested and p-value, + for a split made and x for one turned down.
func splitText(res *kinmap.Result) string {
	c := res.Model.Choice
	if c == nil {
		return ""
	}
	var b strings.Builder
	for _, s := range c.Splits {
		mark := "x"
		if s.Made {
			mark = "+"
		}
		fmt.Fprintf(&b, " %s%d(%d, %.1g)", mark, s.K, s.Segments, s.P)
	}
	return b.String()
}
