package export_test

import (
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"testing"
	"time"

	"github.com/chromedp/chromedp"

	"github.com/kinmap/kinmap"
	"github.com/kinmap/kinmap/export"
	"github.com/kinmap/kinmap/scenarios"
)

// The report of a large fleet (the pumping-station scenario, 1,000 sites
// × 8 weeks, seed 1) stays under 8 MB and its explorer is ready within
// 2 s of the start of the navigation in headless chromium (the median of
// three loads); every picture decodes at its file's size, the table lists
// every site and a regime's sites are those sites.geojson gives it.
func TestExplorerLargeFleet(t *testing.T) {
	if testing.Short() {
		t.Skip("end-to-end run of 1,000 sites")
	}
	export.Tool(t, "chromium") // before the long run
	start := time.Now()
	spec, err := scenarios.DefaultSpec("pumping")
	if err != nil {
		t.Fatal(err)
	}
	spec.Sites, spec.Weeks = 1000, 8
	fleet, err := scenarios.Generate(spec)
	if err != nil {
		t.Fatal(err)
	}
	in := t.TempDir()
	if _, err := fleet.Write(in, scenarios.FileSites, scenarios.FileLongParquet); err != nil {
		t.Fatal(err)
	}
	o := kinmap.DefaultOptions()
	o.Data = []string{filepath.Join(in, scenarios.FileLongParquet)}
	o.Sites = filepath.Join(in, scenarios.FileSites)
	res, err := kinmap.Train(o)
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	if err := res.Write(dir); err != nil {
		t.Fatal(err)
	}
	t.Logf("fleet generated, trained and written in %v", time.Since(start).Round(time.Second))

	ctx := export.ChromiumContext(t, 5*time.Minute)
	info, err := os.Stat(filepath.Join(dir, export.ReportFile))
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("%s: %.2f MB", export.ReportFile, float64(info.Size())/1e6)
	if info.Size() >= 8e6 {
		t.Errorf("%s is %.2f MB, want under 8 MB", export.ReportFile, float64(info.Size())/1e6)
	}

	imgs, _, err := export.ShowReport(ctx, filepath.Join(dir, export.ReportFile))
	if err != nil {
		t.Fatalf("chromium: %v", err)
	}
	for _, p := range export.PictureProblems(t, dir, imgs) {
		t.Error(p)
	}
	var loads []float64
	for range 3 {
		ms, err := export.OpenExplorer(ctx, filepath.Join(dir, export.ReportFile))
		if err != nil {
			t.Fatalf("chromium: %v", err)
		}
		loads = append(loads, ms)
	}
	t.Logf("ready after %.0f ms (loads: %.0f)", median(loads), loads)
	if median(loads) >= 2000 {
		t.Errorf("the explorer is ready after %.0f ms, want under 2,000", median(loads))
	}

	if shots := os.Getenv("KINMAP_SCREENSHOT_DIR"); shots != "" && len(res.Switches) > 0 {
		// The explorer with the page of the first site that switched.
		if _, err := export.OpenExplorer(ctx, filepath.Join(dir, export.ReportFile)+"#site="+res.Switches[0].Site); err != nil {
			t.Fatal(err)
		}
		// The same document with another fragment does not load again.
		if err := chromedp.Do(ctx, chromedp.WaitReady(chromedp.CSS("#ex-site h3"))); err != nil {
			t.Fatal(err)
		}
		shot, err := chromedp.Run(ctx, chromedp.Screenshot(chromedp.CSS("#explorer")))
		if err == nil {
			err = os.WriteFile(filepath.Join(shots, "explorer-fleet.png"), shot, 0o644)
		}
		if err != nil {
			t.Error(err)
		}
	}

	byRegime, _, all := export.GeojsonSites(t, dir)
	if got, err := export.ListedSites(ctx); err != nil || len(got) != len(all) || len(all) != spec.Sites {
		t.Errorf("the table lists %d sites (%v); sites.geojson has %d, the fleet %d", len(got), err, len(all), spec.Sites)
	}
	for _, g := range res.Model.Regimes {
		if err := chromedp.Do(ctx, chromedp.Click(chromedp.CSS(fmt.Sprintf(`#ex-regimes button[data-regime="%d"]`, g.ID)))); err != nil {
			t.Fatal(err)
		}
		got, err := export.ListedSites(ctx)
		if err != nil {
			t.Fatal(err)
		}
		slices.Sort(got)
		want := slices.Sorted(slices.Values(byRegime[g.ID]))
		if !slices.Equal(got, want) {
			t.Errorf("regime %d lists %d sites; sites.geojson gives it %d", g.ID, len(got), len(want))
		}
		// Let go of it again.
		if err := chromedp.Do(ctx, chromedp.Click(chromedp.CSS(fmt.Sprintf(`#ex-regimes button[data-regime="%d"]`, g.ID)))); err != nil {
			t.Fatal(err)
		}
	}
}

func median(x []float64) float64 {
	s := slices.Sorted(slices.Values(x))
	if n := len(s); n%2 == 1 {
		return s[n/2]
	} else {
		return (s[n/2-1] + s[n/2]) / 2
	}
}
