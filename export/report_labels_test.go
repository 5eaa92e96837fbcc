package export

import (
	"bytes"
	"math"
	"strings"
	"testing"

	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/mapper"
)

// The report's section on regimes in engineering terms shows each
// regime's label and levels in the channels' units, and defines the
// statistics the descriptions name, and only those.
func TestReportLabels(t *testing.T) {
	r := fixtureRun()
	r.Model.Regimes[0].Traits = []mapper.Trait{{Feature: "flow.mean", Sigma: 1.2}}
	r.Model.Regimes[1].Traits = []mapper.Trait{{Feature: "vibration.p95", Sigma: 2.1}, {Feature: "flow.mean", Sigma: -1.4}}
	r.Levels = &Levels{
		Regimes: map[int][]features.Level{
			1: {{Channel: "flow", Readings: 10, Median: 48.04, P95: 61}},
			2: {{Channel: "flow", Readings: 5, Median: 12.34, P95: 20}, {Channel: "vibration", Readings: 5, Median: 7.1, P95: 9}},
			3: {{Channel: "flow", Median: math.NaN(), P95: math.NaN()}},
		},
		Fleet: []features.Level{{Channel: "flow", Readings: 15, Median: 40, P95: 60}, {Channel: "vibration", Readings: 5, Median: 2.3, P95: 3}},
		Units: map[string]string{"flow": "m³/h"},
	}
	var b bytes.Buffer
	d := described(r)
	if err := writeReport(&b, d, nil, nil, nil, nil, nil); err != nil {
		t.Fatal(err)
	}
	html := b.String()
	for _, want := range []string{
		"Regimes in engineering terms",
		"worn bearing, &#34;B&#34;", // the fixture's label of regime 2, escaped
		"vibration 7.1 (9) [fleet 2.3 (3)]",
		"flow 12.3 m³/h (20) [fleet 40 (60)]",
		"no window in this run", // regime 3
		"<code>p95</code>", "95th percentile", "<code>mean</code>",
	} {
		if !strings.Contains(html, want) {
			t.Errorf("report lacks %q", want)
		}
	}
	// The fixture's traits name mean and p95 only.
	if strings.Contains(html, "<code>flat</code>") {
		t.Error("report defines flat, which no description names")
	}
	// Regime 2's description: its trait channels first, vibration then flow.
	if want := "vibration median 7.1 (fleet 2.3), flow median 12.3 m³/h (fleet 40); apart: vibration.p95 +2.1σ, flow.mean −1.4σ"; d.Model.Regimes[1].Description != want {
		t.Errorf("description %q, want %q", d.Model.Regimes[1].Description, want)
	}
	if r.Model.Regimes[1].Description != "vibration.p95 +2.1σ, flow.mean −1.4σ" {
		t.Error("described changed the run's own model")
	}
}

func TestNumber(t *testing.T) {
	for v, want := range map[float64]string{0: "0", 1234.6: "1235", 48.04: "48", 12.34: "12.3", 0.01234: "0.0123", -7.1: "−7.1", 0.57: "0.57", 100: "100"} {
		if got := number(v); got != want {
			t.Errorf("number(%g) = %q, want %q", v, got, want)
		}
	}
}
