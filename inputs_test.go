package kinmap_test

import (
	"path/filepath"
	"slices"
	"strings"
	"testing"
	"time"

	"github.com/kinmap/kinmap"
	"github.com/kinmap/kinmap/ingest"
)

// One sensor writing a historian's bad-quality marker (the largest
// float64) in 2 % of its readings once dropped 15 of 45 features
// fleet-wide with a "no variance" warning. Under the sentinel rule the
// fleet keeps the feature set of the clean dump, and the run names the site
// and the count.
func TestSentinelKeepsFeatureSet(t *testing.T) {
	if testing.Short() {
		t.Skip("end-to-end run")
	}
	dir := t.TempDir()
	fleet := fleetT(t, 20, 1)
	from, to := fleet.Spec.Start, fleet.Spec.Start.Add(7*24*time.Hour)
	clean := filepath.Join(dir, "clean.csv")
	writeDump(t, clean, fleet, from, to, 0, 0, 1)
	bad := fleet.Sites[3]
	marked := 0
	for i := range bad.Readings.Times {
		if i%50 == 0 {
			bad.Readings.Values[0][i] = 1.7976931348623157e308
			marked++
		}
	}
	dirty := filepath.Join(dir, "dirty.csv")
	writeDump(t, dirty, fleet, from, to, 0, 0, 1)

	var names [2][]string
	for k, path := range []string{clean, dirty} {
		o := options(path)
		o.Map.Seed = 3
		res, err := kinmap.Train(o)
		if err != nil {
			t.Fatal(err)
		}
		names[k] = res.Model.Scaler.Names
		if k == 1 {
			want := "site " + bad.ID + ": "
			if !slices.ContainsFunc(res.Info.Warnings, func(w string) bool { return strings.HasPrefix(w, want) && strings.Contains(w, "sentinel") }) {
				t.Errorf("no warning naming %s and its sentinels: %q", bad.ID, res.Info.Warnings)
			}
			if got := res.Ingest.SiteDropped[bad.ID][ingest.DropSentinel]; got != int64(marked) {
				t.Errorf("%d sentinels counted for %s, %d written", got, bad.ID, marked)
			}
		}
	}
	if !slices.Equal(names[0], names[1]) {
		t.Errorf("features of the clean dump %d, with one bad sensor %d:\n%v\n%v", len(names[0]), len(names[1]), names[0], names[1])
	}
}

// A model trained on some channels applies to the whole dump: assign once
// listed dozens of "extra" features of the channels left out. Asked for
// other channels, it says which channels the model uses.
func TestAssignUsesTheModelsChannels(t *testing.T) {
	if testing.Short() {
		t.Skip("end-to-end run")
	}
	fleet := fleetT(t, 12, 1)
	dump := filepath.Join(t.TempDir(), "dump.csv")
	writeDump(t, dump, fleet, fleet.Spec.Start, fleet.Spec.Start.Add(7*24*time.Hour), 0, 0, 1)
	o := options(dump)
	o.Ingest.Channels = []string{"flow", "pressure"}
	trained, err := kinmap.Train(o)
	if err != nil {
		t.Fatal(err)
	}
	res, err := kinmap.Assign(options(dump), trained.Model)
	if err != nil {
		t.Fatalf("assign without --channels: %v", err)
	}
	if !slices.Equal(res.Ingest.Channels, []string{"flow", "pressure"}) {
		t.Errorf("assign read channels %v", res.Ingest.Channels)
	}
	other := options(dump)
	other.Ingest.Channels = []string{"flow", "current"}
	if _, err := kinmap.Assign(other, trained.Model); err == nil || !strings.Contains(err.Error(), "which uses the channels flow, pressure") {
		t.Errorf("assign with other channels: %v, want the model's channels named", err)
	}
}
