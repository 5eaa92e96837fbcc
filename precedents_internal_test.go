package kinmap

import (
	"fmt"
	"slices"
	"testing"
	"time"

	"github.com/kinmap/kinmap/attention"
	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/ingest"
	"github.com/kinmap/kinmap/model"
)

// TestPrecedentSites checks which sites get precedents: those of the work
// list in its order (a fleet-wide row's sites among them), then those
// whose last window is classified as a label, most confident first, at
// most maxPrecedentSites, each once.
func TestPrecedentSites(t *testing.T) {
	day0 := time.Date(2026, 11, 2, 0, 0, 0, 0, time.UTC)
	var sites []string
	var ws []features.Window
	for i := range 14 {
		s := fmt.Sprintf("S%02d", i)
		sites = append(sites, s)
		for d := range 3 {
			ws = append(ws, features.Window{Site: s, Start: day0.AddDate(0, 0, d), End: day0.AddDate(0, 0, d+1),
				Scaled: []float64{float64(i), float64(d)}})
		}
	}
	const fail = "bearing failure"
	lastOf := func(site string) *features.Window {
		i := slices.IndexFunc(ws, func(w features.Window) bool { return w.Site == site })
		return &ws[i+2]
	}
	lastOf("S09").Condition, lastOf("S09").ConditionConfidence = fail, 0.6
	lastOf("S11").Condition, lastOf("S11").ConditionConfidence = fail, 0.9
	lastOf("S03").Condition, lastOf("S03").ConditionConfidence = fail, 0.95 // also on the list
	r := &Result{
		Table: &features.Table{Windows: ws},
		Conditions: &Conditions{
			Events:    []ingest.EventRow{{Site: "S00", Start: day0, End: day0, Point: true, Label: fail}},
			Knowledge: &model.Conditions{Labels: []string{fail}},
			Span:      7 * 24 * time.Hour,
		},
	}
	for _, c := range []struct {
		name string
		list []attention.Row
		want []string
	}{
		{"no list", nil, []string{"S03", "S11", "S09"}},
		{"list first", []attention.Row{
			{Site: "S05", Sites: []string{"S05"}},
			{Sites: []string{"S01", "S03"}}, // a fleet-wide row
			{Site: "S02", Sites: []string{"S02"}},
		}, []string{"S05", "S01", "S03", "S02", "S11", "S09"}},
		{"capped", []attention.Row{{Sites: sites[:12]}}, sites[:maxPrecedentSites]},
	} {
		r.Attention = c.list
		var got []string
		for _, p := range r.precedents(false) {
			got = append(got, p.Site)
			if len(p.Precedents) == 0 {
				t.Errorf("%s: %s has no precedents", c.name, p.Site)
			}
		}
		if !slices.Equal(got, c.want) {
			t.Errorf("%s: precedents for %v, want %v", c.name, got, c.want)
		}
	}
}
