package main

import (
	"encoding/csv"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
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
	drops, unused := plantBadRows(t, week2, fleet.Sites[0].ID, fleet.Sites[1].ID, fleet.Sites[3].ID, start.AddDate(0, 0, 9))

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

	checkDrops(t, rows, drops, fleet.Sites[3].ID, unused)

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
	for _, want := range append(silent, sparse, "vibration", fleet.Sites[0].ID, fleet.Sites[1].ID, fleet.Sites[3].ID) {
		if !strings.Contains(section, want) {
			t.Errorf("the report's data health section does not name %s", want)
		}
	}
}

// plantedDrop is a count of rows planted in a dump that ingest must drop.
type plantedDrop struct {
	site, reason string
	n            int64
	share        float64 // of the rows of the site in the dump
}

// plantBadRows adds rows to the long CSV dump at path that ingest drops:
// null times and NaN values at site a, times out of range and null
// channels at site b, and rows without a site; and it keeps only the
// readings before 06:00 of site c on the given day, a window below the
// coverage rule. It returns the drops it planted, with their share of
// each site's rows counted from the file, and the readings of c that
// fall in no window used.
func plantBadRows(t *testing.T, path, a, b, c string, day time.Time) ([]plantedDrop, int64) {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	rows, err := csv.NewReader(f).ReadAll()
	f.Close()
	if err != nil {
		t.Fatal(err)
	}
	var unused int64
	kept := rows[:1]
	for _, r := range rows[1:] {
		at, err := time.Parse(time.RFC3339, r[1])
		if err != nil {
			t.Fatal(err)
		}
		if r[0] == c && !at.Before(day) && at.Before(day.AddDate(0, 0, 1)) {
			if at.Hour() >= 6 {
				continue
			}
			unused++
		}
		kept = append(kept, r)
	}
	when := day.Add(90 * time.Second).Format(time.RFC3339)
	drops := []plantedDrop{
		{site: a, reason: "null time", n: 150}, {site: a, reason: "NaN value", n: 150},
		{site: b, reason: "time out of range", n: 12}, {site: b, reason: "null channel", n: 9},
		{site: "", reason: "null site", n: 7},
	}
	for _, d := range drops {
		for range d.n {
			r := []string{d.site, when, "flow", "1.5"}
			switch d.reason {
			case "null time":
				r[1] = ""
			case "NaN value":
				r[3] = "NaN"
			case "time out of range":
				r[1] = "2300-01-01T00:00:00Z"
			case "null channel":
				r[2] = ""
			}
			kept = append(kept, r)
		}
	}
	perSite := map[string]int{}
	for _, r := range kept[1:] {
		perSite[r[0]]++
	}
	for i := range drops {
		if drops[i].site == "" {
			drops[i].share = float64(drops[i].n) / float64(len(kept)-1)
		} else {
			drops[i].share = float64(drops[i].n) / float64(perSite[drops[i].site])
		}
	}
	f, err = os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	w := csv.NewWriter(f)
	w.WriteAll(kept)
	if err := w.Error(); err != nil {
		t.Fatal(err)
	}
	return drops, unused
}

// checkDrops checks the dropped and unused findings of health.csv (kind,
// site, channel, reason, count, share, warning, detail) against what
// plantBadRows planted; site is the one it thinned.
func checkDrops(t *testing.T, rows [][]string, drops []plantedDrop, site string, unused int64) {
	t.Helper()
	if got := rows[0][3]; got != "reason" {
		t.Fatalf("health.csv column 4 is %q, want reason", got)
	}
	found := 0
	for _, r := range rows[1:] {
		if r[0] != "dropped" {
			continue
		}
		found++
		i := slices.IndexFunc(drops, func(d plantedDrop) bool { return d.site == r[1] && d.reason == r[3] })
		if i < 0 {
			t.Errorf("health.csv lists a drop that was not planted: %v", r)
			continue
		}
		d := drops[i]
		count, _ := strconv.ParseInt(r[4], 10, 64)
		share, _ := strconv.ParseFloat(r[5], 64)
		// A warning when the site lost more than 5 % of its rows, all
		// reasons together.
		lost := 0.0
		for _, e := range drops {
			if e.site == d.site {
				lost += e.share
			}
		}
		warn := r[6] == "true"
		if count != d.n || math.Abs(share-d.share) > 1e-9 || warn != (lost > 0.05) {
			t.Errorf("drop %v: count %d share %g warning %v, want %d, %g, %v", r, count, share, warn, d.n, d.share, lost > 0.05)
		}
	}
	if found != len(drops) {
		t.Errorf("health.csv lists %d drops, %d were planted", found, len(drops))
	}
	var got int64 = -1
	for _, r := range rows[1:] {
		if r[0] == "unused" && r[1] == site {
			got, _ = strconv.ParseInt(r[4], 10, 64)
		}
	}
	if got != unused {
		t.Errorf("health.csv counts %d unused readings of %s, %d fall in its window below coverage", got, site, unused)
	}
}
