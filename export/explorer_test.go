package export

import (
	"context"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"
	"time"

	"github.com/chromedp/chromedp"

	"github.com/kinmap/kinmap/ingest"
)

// openExplorer opens a report in the browser and waits until its explorer
// is ready; it returns the milliseconds from the start of the navigation
// to then, as the page measured them (performance.now, High Resolution
// Time, W3C: its origin is the start of the navigation).
func openExplorer(ctx context.Context, path string) (float64, error) {
	abs, err := filepath.Abs(path)
	if err != nil {
		return 0, err
	}
	if err := chromedp.Do(ctx, chromedp.EmulateViewport(1280, 1600), chromedp.Navigate("file://"+abs)); err != nil {
		return 0, err
	}
	return chromedp.Run(ctx, chromedp.Poll[float64]("window.kinmapReadyAt", chromedp.WithPollingTimeout(60*time.Second)))
}

// listedSites returns the sites of the explorer's table, in its order.
func listedSites(ctx context.Context) ([]string, error) {
	return chromedp.Run(ctx, chromedp.Evaluate[[]string](
		`Array.from(document.querySelectorAll("#ex-sites tbody tr")).map(r => r.dataset.site)`))
}

// geojsonSites reads sites.geojson of dir: the site IDs by the regime of
// their last window and by the cell (col, row) of its BMU.
func geojsonSites(t *testing.T, dir string) (byRegime map[int][]string, byCell map[[2]int][]string, all []string) {
	t.Helper()
	var fc struct {
		Features []struct {
			Properties struct {
				Site   string `json:"site"`
				Regime int    `json:"regime"`
				Col    int    `json:"col"`
				Row    int    `json:"row"`
			} `json:"properties"`
		} `json:"features"`
	}
	if err := json.Unmarshal(read(t, dir, SitesFile), &fc); err != nil {
		t.Fatal(err)
	}
	byRegime, byCell = map[int][]string{}, map[[2]int][]string{}
	for _, f := range fc.Features {
		p := f.Properties
		byRegime[p.Regime] = append(byRegime[p.Regime], p.Site)
		byCell[[2]int{p.Col, p.Row}] = append(byCell[[2]int{p.Col, p.Row}], p.Site)
		all = append(all, p.Site)
	}
	return byRegime, byCell, all
}

// sorted returns a sorted copy.
func sorted(s []string) []string { return slices.Sorted(slices.Values(s)) }

// explorerRun is the fixture run with daily summaries of one channel,
// "flow", whose level follows the regime of each window: 10, 20 or 30, a
// reading every 10 minutes.
func explorerRun() *Run {
	r := fixtureRun()
	ds := &ingest.Dataset{Channels: []string{"flow"}}
	series := map[string]*ingest.Series{}
	for _, e := range r.Table.Windows {
		s := series[e.Site]
		if s == nil {
			s = &ingest.Series{}
			series[e.Site] = s
			ds.Sites = append(ds.Sites, &ingest.SiteData{ID: e.Site, Series: map[string]ingest.Series{}})
		}
		for t := e.Start; t.Before(e.End); t = t.Add(10 * time.Minute) {
			s.Times = append(s.Times, t.UnixNano())
			s.Values = append(s.Values, float64(10*e.Regime)+math.Sin(float64(t.Unix())))
		}
	}
	for _, sd := range ds.Sites {
		sd.Series["flow"] = *series[sd.ID]
	}
	r.Daily = DailySummaries(ds, 1)
	return r
}

// The explorer in a real browser (Debian chromium, headless, through the
// DevTools protocol): clicking a regime lists exactly the sites that
// sites.geojson puts in it; clicking a unit lists exactly those whose last
// window's BMU is that cell; the search finds a site by its ID, and a
// click opens its page with its regime strip, its switch and a panel of
// daily readings per channel.
func TestExplorerInChromium(t *testing.T) {
	ctx := chromiumContext(t, 90*time.Second)
	dir := t.TempDir()
	r := explorerRun()
	if err := Write(dir, r); err != nil {
		t.Fatal(err)
	}
	byRegime, byCell, all := geojsonSites(t, dir)
	if _, err := openExplorer(ctx, filepath.Join(dir, ReportFile)); err != nil {
		t.Fatalf("chromium: %v", err)
	}
	// The explorer shows after the sections for reading, though its
	// script comes first in the page's source.
	order, err := chromedp.Run(ctx, chromedp.Evaluate[[]string](`["summary", "regimes", "pictures", "switches", "unfamiliar", "explorer", "cautions", "files"]
		.map(id => [id, document.getElementById(id).getBoundingClientRect().top]).sort((a, b) => a[1] - b[1]).map(p => p[0])`))
	if want := []string{"summary", "regimes", "pictures", "switches", "unfamiliar", "explorer", "cautions", "files"}; err != nil || !slices.Equal(order, want) {
		t.Errorf("sections from the top: %v (%v), want %v", order, err, want)
	}
	// Every track of tracks.geojson is drawn on the site map, by site.
	var tracks struct {
		Features []struct {
			Properties struct {
				Site string `json:"site"`
			} `json:"properties"`
		} `json:"features"`
	}
	if err := json.Unmarshal(read(t, dir, TracksFile), &tracks); err != nil {
		t.Fatal(err)
	}
	var wantTracks []string
	for _, f := range tracks.Features {
		wantTracks = append(wantTracks, f.Properties.Site)
	}
	drawn, err := chromedp.Run(ctx, chromedp.Evaluate[[]string](`Array.from(document.querySelectorAll("#ex-sitemap polyline.track")).map(p => p.dataset.site)`))
	if err != nil || len(wantTracks) == 0 || !slices.Equal(sorted(drawn), sorted(wantTracks)) {
		t.Errorf("the site map draws tracks of %v (%v); tracks.geojson holds %v", drawn, err, wantTracks)
	}
	if got, err := listedSites(ctx); err != nil || !slices.Equal(sorted(got), sorted(all)) {
		t.Errorf("before any choice the table lists %v (%v), want every site %v", got, err, all)
	}
	for _, g := range r.Model.Regimes {
		if err := chromedp.Do(ctx, chromedp.Click(chromedp.CSS(fmt.Sprintf(`#ex-regimes button[data-regime="%d"]`, g.ID)))); err != nil {
			t.Fatal(err)
		}
		got, err := listedSites(ctx)
		if err != nil {
			t.Fatal(err)
		}
		if want := sorted(byRegime[g.ID]); !slices.Equal(sorted(got), want) {
			t.Errorf("regime %d lists %v; sites.geojson gives %v", g.ID, got, want)
		}
		// Its units, and no other, are marked on the unit map.
		marked, err := chromedp.Run(ctx, chromedp.Evaluate[[]int](`Array.from(document.querySelectorAll("#ex-units .unit.sel:not(.copy)")).map(p => +p.dataset.u)`))
		if err != nil {
			t.Fatal(err)
		}
		var want []int
		for u, id := range r.Model.UnitRegime {
			if id == g.ID {
				want = append(want, u)
			}
		}
		if !slices.Equal(marked, want) {
			t.Errorf("regime %d marks units %v, want %v", g.ID, marked, want)
		}
	}
	if err := chromedp.Do(ctx, chromedp.Click(chromedp.CSS(`#ex-clear`))); err != nil {
		t.Fatal(err)
	}
	cols := r.Model.Map.Lattice.Cols
	for cell, want := range byCell {
		u := cell[1]*cols + cell[0]
		if err := chromedp.Do(ctx, chromedp.Click(chromedp.CSS(fmt.Sprintf(`#ex-units .unit[data-u="%d"]:not(.copy)`, u)))); err != nil {
			t.Fatal(err)
		}
		got, err := listedSites(ctx)
		if err != nil {
			t.Fatal(err)
		}
		if !slices.Equal(sorted(got), sorted(want)) {
			t.Errorf("unit %d, %d lists %v; sites.geojson puts %v there", cell[0], cell[1], got, want)
		}
		// A second click on the unit lets go of it.
		if err := chromedp.Do(ctx, chromedp.Click(chromedp.CSS(fmt.Sprintf(`#ex-units .unit[data-u="%d"]:not(.copy)`, u)))); err != nil {
			t.Fatal(err)
		}
	}

	// The search finds a site by part of its ID, and only matching sites.
	if err := chromedp.Do(ctx, chromedp.SendKeys(chromedp.CSS(`#ex-search`), "s-0")); err != nil {
		t.Fatal(err)
	}
	got, err := listedSites(ctx)
	if want := []string{"PS-01", "PS-02"}; err != nil || !slices.Equal(sorted(got), want) {
		t.Errorf("searching %q lists %v (%v), want %v", "s-0", got, err, want)
	}
	if err := chromedp.Do(ctx, chromedp.Click(chromedp.CSS(`#ex-sites tr[data-site="PS-01"]`))); err != nil {
		t.Fatal(err)
	}
	type page struct {
		Heading  string `json:"heading"`
		Segments int    `json:"segments"`
		Switches int    `json:"switches"`
		Panels   int    `json:"panels"`
		Hash     string `json:"hash"`
	}
	p, err := chromedp.Run(ctx, chromedp.Evaluate[page](`({heading: document.querySelector("#ex-site h3").textContent,
		segments: document.querySelectorAll("#ex-site .strip rect").length,
		switches: document.querySelectorAll("#ex-site .strip .switch").length,
		panels: document.querySelectorAll("#ex-site figure.multiple polyline.median").length,
		hash: location.hash})`))
	if err != nil {
		t.Fatal(err)
	}
	// PS-01 is in regime 1 for three days, then in 2 (fixture_test.go).
	if want := (page{Heading: "Site PS-01", Segments: 2, Switches: 1, Panels: 1, Hash: "#site=PS-01"}); p != want {
		t.Errorf("the page of PS-01 is %+v, want %+v", p, want)
	}
	// An address naming a site opens its page.
	heading, err := openSitePage(ctx, "T-7")
	if err != nil || heading != "Site T-7" {
		t.Errorf("after #site=T-7 the site page is %q (%v)", heading, err)
	}
	if dir := os.Getenv("KINMAP_SCREENSHOT_DIR"); dir != "" {
		shot, err := chromedp.Run(ctx, chromedp.Screenshot(chromedp.CSS("#explorer")))
		if err == nil {
			err = os.WriteFile(filepath.Join(dir, "explorer.png"), shot, 0o644)
		}
		if err != nil {
			t.Error(err)
		}
	}
}

// Daily summaries are the quantiles of definition 7 of Hyndman & Fan
// (1996), worked by hand: for 21 readings 1 … 21 the 5th percentile lies
// at position 20 · 0.05 = 1 (0-based), value 2, the median at 10, value
// 11, the 95th at 19, value 20. Readings fall on their UTC day, a reading
// before 1970 included, and NaN readings are not counted.
func TestDailySummaries(t *testing.T) {
	day := time.Date(2025, 3, 1, 0, 0, 0, 0, time.UTC)
	var s ingest.Series
	for i := range 21 {
		s.Times = append(s.Times, day.Add(time.Duration(i)*time.Minute).UnixNano())
		s.Values = append(s.Values, float64(21-i)) // unsorted
	}
	s.Times = append(s.Times, day.Add(25*time.Hour).UnixNano(), day.Add(26*time.Hour).UnixNano())
	s.Values = append(s.Values, 7, math.NaN())
	old := time.Date(1969, 12, 31, 23, 0, 0, 0, time.UTC)
	ds := &ingest.Dataset{Channels: []string{"a"}, Sites: []*ingest.SiteData{
		{ID: "old", Series: map[string]ingest.Series{"a": {Times: []int64{old.UnixNano()}, Values: []float64{4}}}},
		{ID: "x", Series: map[string]ingest.Series{"a": s}},
	}}
	got := DailySummaries(ds, 0)
	want := []DailySummary{
		{Site: "old", Channel: "a", Day: time.Date(1969, 12, 31, 0, 0, 0, 0, time.UTC), Readings: 1, P05: 4, Median: 4, P95: 4},
		{Site: "x", Channel: "a", Day: day, Readings: 21, P05: 2, Median: 11, P95: 20},
		{Site: "x", Channel: "a", Day: day.AddDate(0, 0, 1), Readings: 1, P05: 7, Median: 7, P95: 7},
	}
	if len(got) != len(want) {
		t.Fatalf("got %+v, want %+v", got, want)
	}
	for i := range want {
		g, w := got[i], want[i]
		if g.Site != w.Site || g.Channel != w.Channel || !g.Day.Equal(w.Day) || g.Readings != w.Readings ||
			math.Abs(g.P05-w.P05) > 1e-12 || math.Abs(g.Median-w.Median) > 1e-12 || math.Abs(g.P95-w.P95) > 1e-12 {
			t.Errorf("summary %d is %+v, want %+v", i, g, w)
		}
	}
}

// Above its bound the page keeps the daily readings of the sites with
// switches first and says how many it left out.
func TestExplorerLeavesOutDaily(t *testing.T) {
	r := explorerRun()
	var sites []exSite
	for _, id := range []string{"a", "b", "c"} {
		sites = append(sites, exSite{ID: id})
	}
	sites[2].Switches = 1
	r.Daily = nil
	day := time.Date(2025, 1, 1, 0, 0, 0, 0, time.UTC)
	// Each site: one channel over 10 days, 30 values; the bound holds two
	// sites less one value.
	const days, limit = 10, 59
	for _, s := range sites {
		r.Daily = append(r.Daily, DailySummary{Site: s.ID, Channel: "c", Day: day, Readings: 1, P05: 1, Median: 2, P95: 3},
			DailySummary{Site: s.ID, Channel: "c", Day: day.AddDate(0, 0, days-1), Readings: 1, P05: 1, Median: 2, P95: 3})
	}
	d, kept, omitted := dailyData(r, sites, limit)
	if _, ok := kept["c"]; d.Sites != 1 || len(kept) != 1 || !ok {
		t.Errorf("kept %d sites' summaries (%d strings), want only c's, the one that switched", d.Sites, len(kept))
	}
	if len(omitted) != 1 || !strings.Contains(omitted[0], "1 of 3 sites") {
		t.Errorf("the page says %q", omitted)
	}
}
