package kinmap_test

import (
	"encoding/json"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"github.com/kinmap/kinmap"
	"github.com/kinmap/kinmap/internal/tooltest"
)

// levelsScript computes, with numpy, the median and the 95th percentile of
// the raw readings of a long CSV dump (site, time, channel, value) that
// fall in the windows [window_start, window_end) of each regime of
// timeline.csv, and over all its windows, and prints them as JSON:
// {"REGIME or fleet": {"CHANNEL": [median, p95, readings]}}. numpy's
// default quantile is definition 7 of Hyndman & Fan; windows do not
// overlap in this run, so no reading counts twice. Repeated readings of a
// site, channel and time are resolved as the README says ingest does.
const levelsScript = `
import csv, json, sys
from datetime import datetime
import numpy as np

def ts(s):
    return datetime.fromisoformat(s.replace("Z", "+00:00")).timestamp()

readings = {}
with open(sys.argv[1]) as f:
    for r in csv.DictReader(f):
        # A repeated (site, channel, time): the one read last wins (README).
        readings.setdefault((r["site"], r["channel"]), {})[ts(r["time"])] = float(r["value"])
readings = {k: sorted(v.items()) for k, v in readings.items()}
windows = {}
with open(sys.argv[2]) as f:
    for r in csv.DictReader(f):
        windows.setdefault(r["site"], []).append((ts(r["window_start"]), ts(r["window_end"]), r["regime"]))
groups = {}
for (site, ch), rs in readings.items():
    t = np.array([x[0] for x in rs]); v = np.array([x[1] for x in rs])
    for start, end, regime in windows.get(site, []):
        sel = v[(t >= start) & (t < end)]
        for g in (regime, "fleet"):
            groups.setdefault(g, {}).setdefault(ch, []).append(sel)
out = {}
for g, chans in groups.items():
    out[g] = {}
    for ch, parts in chans.items():
        x = np.concatenate(parts)
        if len(x):
            out[g][ch] = [float(np.median(x)), float(np.quantile(x, 0.95)), int(len(x))]
print(json.dumps(out))
`

// The typical levels of each regime in regimes.geojson, and the medians its
// descriptions give, are those numpy computes from the raw readings of the
// dump in the windows timeline.csv puts in that regime.
func TestLevelsAgreeWithNumpy(t *testing.T) {
	py := tooltest.Python(t, "numpy")
	fleet := fleetT(t, 30, 1)
	dir := t.TempDir()
	dump := filepath.Join(dir, "dump.csv")
	writeDump(t, dump, fleet, fleet.WindowStart(0), fleet.WindowStart(7), 0, 0, 3)
	o := options(dump)
	o.Units = map[string]string{"flow": "m³/h", "vibration": "mm/s"}
	res, err := kinmap.Train(o)
	if err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "out")
	if err := res.Write(out); err != nil {
		t.Fatal(err)
	}
	b, err := exec.Command(py, "-c", levelsScript, dump, filepath.Join(out, "timeline.csv")).Output()
	if err != nil {
		t.Fatalf("numpy: %v", err)
	}
	var want map[string]map[string][3]float64
	if err := json.Unmarshal(b, &want); err != nil {
		t.Fatal(err)
	}
	b, err = os.ReadFile(filepath.Join(out, "regimes.geojson"))
	if err != nil {
		t.Fatal(err)
	}
	var fc struct {
		Features []struct {
			Properties struct {
				Regime      int    `json:"regime"`
				Description string `json:"description"`
				Levels      map[string]struct {
					Unit        string
					Readings    int
					Median, P95 float64
					FleetMedian float64 `json:"fleet_median"`
					FleetP95    float64 `json:"fleet_p95"`
				} `json:"levels"`
			} `json:"properties"`
		} `json:"features"`
	}
	if err := json.Unmarshal(b, &fc); err != nil {
		t.Fatal(err)
	}
	close := func(a, b float64) bool { return math.Abs(a-b) <= 1e-9*math.Max(1, math.Abs(b)) }
	checked := 0
	for _, f := range fc.Features {
		p := f.Properties
		id := strconv.Itoa(p.Regime)
		for ch, w := range want[id] {
			got := p.Levels[ch]
			fl := want["fleet"][ch]
			if got.Readings != int(w[2]) || !close(got.Median, w[0]) || !close(got.P95, w[1]) || !close(got.FleetMedian, fl[0]) || !close(got.FleetP95, fl[1]) {
				t.Errorf("regime %d, %s: levels %+v; numpy: median %g, p95 %g of %g readings, fleet median %g, p95 %g", p.Regime, ch, got, w[0], w[1], w[2], fl[0], fl[1])
			}
			if got.Unit != o.Units[ch] {
				t.Errorf("regime %d, %s: unit %q, want %q", p.Regime, ch, got.Unit, o.Units[ch])
			}
			// The description rounds to three significant digits.
			m := regexp.MustCompile(regexp.QuoteMeta(ch) + ` median (−?[0-9.]+)( [^ ]+)? \(fleet (−?[0-9.]+)\)`).FindStringSubmatch(p.Description)
			if m == nil {
				continue // the description names at most four channels
			}
			for i, v := range []float64{w[0], fl[0]} {
				shown, err := strconv.ParseFloat(strings.Replace(m[1+2*i], "−", "-", 1), 64)
				if tol := 0.5 * math.Pow(10, math.Floor(math.Log10(math.Abs(v)))-2); err != nil || math.Abs(shown-v) > tol*(1+1e-9) && v != 0 {
					t.Errorf("regime %d: description %q gives %s %s, numpy %g", p.Regime, p.Description, ch, m[1+2*i], v)
				}
			}
			if unit := strings.TrimSpace(m[2]); unit != o.Units[ch] {
				t.Errorf("regime %d: description %q gives %s in %q, want %q", p.Regime, p.Description, ch, unit, o.Units[ch])
			}
			checked++
		}
	}
	if checked < len(fc.Features) {
		t.Errorf("%d channel levels checked in the descriptions of %d regimes", checked, len(fc.Features))
	}
	t.Logf("%d regimes, %d channel medians checked in descriptions", len(fc.Features), checked)
}
