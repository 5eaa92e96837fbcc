package main

import (
	"encoding/csv"
	"encoding/json"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"
	"time"

	"github.com/kinmap/kinmap/internal/cli"
	"github.com/kinmap/kinmap/internal/dumptest"
	"github.com/kinmap/kinmap/scenarios"
)

// writeWeek writes the readings of fleet in [from, to) as a long CSV dump,
// leaving out the sites of skip and the channels of drop, and keeping only
// the readings before 06:00 of the sites of sparse (a quarter of each day,
// below the default coverage of 0.6).
func writeWeek(t *testing.T, path string, fleet *scenarios.Fleet, from, to time.Time, skip, drop, sparse []string) {
	t.Helper()
	dumptest.WriteCSV(t, path, fleet, dumptest.CSV{From: from, To: to, Keep: func(site, channel string, at time.Time) bool {
		return !slices.Contains(skip, site) && !slices.Contains(drop, channel) && (!slices.Contains(sparse, site) || at.Hour() < 6)
	}})
}

// A later dump that lost a channel everywhere, two sites altogether, and
// most readings of a third is still assigned (exit 0), and the data health
// (health.csv, run.json and the report) names each: the missing channel,
// the silent sites and the site whose every window failed the coverage
// rule.
func TestAssignDataHealth(t *testing.T) {
	if testing.Short() {
		t.Skip("end-to-end run")
	}
	spec, err := scenarios.DefaultSpec("pumping")
	if err != nil {
		t.Fatal(err)
	}
	spec.Sites, spec.Weeks, spec.Seed = 16, 2, 5
	fleet, err := scenarios.Generate(spec)
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	if _, err := fleet.Write(dir, scenarios.FileSites); err != nil {
		t.Fatal(err)
	}
	register := filepath.Join(dir, scenarios.FileSites)
	week1, week2 := filepath.Join(dir, "week1.csv"), filepath.Join(dir, "week2.csv")
	start := fleet.WindowStart(0)
	writeWeek(t, week1, fleet, start, start.AddDate(0, 0, 7), nil, nil, nil)
	silent := []string{fleet.Sites[2].ID, fleet.Sites[9].ID}
	sparse := fleet.Sites[5].ID
	writeWeek(t, week2, fleet, start.AddDate(0, 0, 7), start.AddDate(0, 0, 14), silent, []string{"vibration"}, []string{sparse})

	hist, model := filepath.Join(dir, "history"), filepath.Join(dir, "model")
	code, _, stderr := invoke("run", "--data", week1, "--sites", register, "--out", filepath.Join(dir, "w1"), "--model", model,
		"--history", hist, "--grid", "8x6", "--quiet")
	if code != cli.ExitOK {
		t.Fatalf("run: exit status %d:\n%s", code, stderr)
	}
	out := filepath.Join(dir, "w2")
	code, _, stderr = invoke("assign", "--model", model, "--data", week2, "--sites", register, "--out", out, "--history", hist, "--quiet")
	if code != cli.ExitOK {
		t.Fatalf("assign: exit status %d, want 0:\n%s", code, stderr)
	}

	f, err := os.Open(filepath.Join(out, "health.csv"))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	rows, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	has := func(kind, site, channel string) bool {
		for _, r := range rows[1:] {
			if r[0] == kind && r[1] == site && r[2] == channel {
				return true
			}
		}
		return false
	}
	for _, s := range silent {
		if !has("silent", s, "") {
			t.Errorf("health.csv does not list silent site %s", s)
		}
	}
	if !has("no_windows", sparse, "") {
		t.Errorf("health.csv does not list %s, whose every window failed the coverage rule", sparse)
	}
	if !has("missing_channel", "", "vibration") {
		t.Error("health.csv does not list the missing channel vibration")
	}
	for _, r := range rows[1:] {
		if r[0] == "silent" && !slices.Contains(silent, r[1]) || r[0] == "no_windows" && r[1] != sparse {
			t.Errorf("health.csv lists %v, which sent its data", r)
		}
	}

	b, err := os.ReadFile(filepath.Join(out, "run.json"))
	if err != nil {
		t.Fatal(err)
	}
	var info struct {
		Health []struct{ Kind, Site, Channel string } `json:"health"`
	}
	if err := json.Unmarshal(b, &info); err != nil {
		t.Fatal(err)
	}
	if len(info.Health) != len(rows)-1 {
		t.Errorf("run.json has %d health findings, health.csv %d", len(info.Health), len(rows)-1)
	}
	// Every other site is on the map, its windows placed without vibration.
	tl, err := os.ReadFile(filepath.Join(out, "timeline.csv"))
	if err != nil {
		t.Fatal(err)
	}
	for _, s := range fleet.Sites {
		on := strings.Contains(string(tl), "\n"+s.ID+",")
		if want := !slices.Contains(silent, s.ID) && s.ID != sparse; on != want {
			t.Errorf("site %s in timeline.csv: %v, want %v", s.ID, on, want)
		}
	}
	report, err := os.ReadFile(filepath.Join(out, "report.html"))
	if err != nil {
		t.Fatal(err)
	}
	i := strings.Index(string(report), `<section id="health">`)
	if i < 0 {
		t.Fatal("the report has no data health section")
	}
	section := string(report[i:])
	section = section[:strings.Index(section, "</section>")]
	for _, want := range append(silent, sparse, "vibration") {
		if !strings.Contains(section, want) {
			t.Errorf("the report's data health section does not name %s", want)
		}
	}
}
