package export

import (
	"context"
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"testing"
	"time"

	"github.com/chromedp/chromedp"
)

// explorerEventsRun is explorerRun with events at two of its sites: PS-01
// a repair over a day, with a note as a run that shows notes carries it,
// and a point event; T-7 one point event. PS-02 and X-9 have none.
func explorerEventsRun() *Run {
	r := explorerRun()
	labels := []string{"bearing failure", "inspection", "repair"}
	counts := make([][]int, len(r.Model.UnitRegime))
	for u := range counts {
		counts[u] = make([]int, len(labels)+1)
	}
	r.Conditions = &Conditions{Labels: labels, UnitCounts: counts, Span: "the window of the event",
		Events: []Event{
			{Site: "PS-01", Start: day0.AddDate(0, 0, 3).Add(12 * time.Hour), End: day0.AddDate(0, 0, 3).Add(12 * time.Hour), Label: "bearing failure"},
			{Site: "T-7", Start: day0.AddDate(0, 0, 4), Label: "inspection"},
			{Site: "PS-01", Start: day0.AddDate(0, 0, 1), End: day0.AddDate(0, 0, 2), Label: "repair", Note: "seal replaced"},
		}}
	return r
}

// openSitePage opens a site's page through the page's address, as a link
// would, and returns the page's heading.
func openSitePage(ctx context.Context, site string) (string, error) {
	return chromedp.Run(ctx, chromedp.Evaluate[string](fmt.Sprintf(`new Promise(done => {
		addEventListener("hashchange", () => done(document.querySelector("#ex-site h3").textContent), {once: true});
		location.hash = "#site=" + %q; })`, site), chromedp.EvalAwaitPromise))
}

// A site page of the explorer draws exactly the site's events on its
// regime strip, by start, a bar for an interval and a triangle for a
// point, each titled with its time (ISO 8601 in UTC, to the minute) and
// label, and lists them under the strip; a site without events shows none.
func TestExplorerSiteEvents(t *testing.T) {
	ctx := chromiumContext(t, 60*time.Second)
	dir := t.TempDir()
	r := explorerEventsRun()
	if err := Write(dir, r); err != nil {
		t.Fatal(err)
	}
	if _, err := openExplorer(ctx, filepath.Join(dir, ReportFile)); err != nil {
		t.Fatalf("chromium: %v", err)
	}
	minute := func(t time.Time) string { return t.UTC().Format("2006-01-02 15:04") + " UTC" }
	type mark struct {
		Tag   string `json:"tag"`
		Title string `json:"title"`
	}
	for _, site := range []string{"PS-01", "PS-02", "T-7", "X-9"} {
		var want []mark
		var listed []string
		evs := slices.Clone(r.Conditions.Events)
		slices.SortStableFunc(evs, func(a, b Event) int { return a.Start.Compare(b.Start) })
		for _, e := range evs {
			if e.Site != site {
				continue
			}
			m := mark{Tag: "path", Title: minute(e.Start) + ": " + e.Label}
			if e.End.After(e.Start) {
				m = mark{Tag: "rect", Title: minute(e.Start) + " to " + minute(e.End) + ": " + e.Label}
			}
			if e.Note != "" {
				m.Title += " — " + e.Note
			}
			want = append(want, m)
			listed = append(listed, m.Title)
		}
		heading, err := openSitePage(ctx, site)
		if err != nil || heading != "Site "+site {
			t.Fatalf("after #site=%s the site page is %q (%v)", site, heading, err)
		}
		got, err := chromedp.Run(ctx, chromedp.Evaluate[[]mark](`Array.from(document.querySelectorAll("#ex-site .strip .event")).map(e => ({tag: e.tagName, title: e.querySelector("title").textContent}))`))
		if err != nil {
			t.Fatal(err)
		}
		if !slices.Equal(got, want) {
			t.Errorf("the strip of %s marks events %q, want %q", site, got, want)
		}
		items, err := chromedp.Run(ctx, chromedp.Evaluate[[]string](`Array.from(document.querySelectorAll("#ex-site ul.events li")).map(e => e.textContent)`))
		if err != nil {
			t.Fatal(err)
		}
		if !slices.Equal(items, listed) {
			t.Errorf("the page of %s lists events %q, want %q", site, items, listed)
		}
	}
	if dir := os.Getenv("KINMAP_SCREENSHOT_DIR"); dir != "" {
		if _, err := openSitePage(ctx, "PS-01"); err != nil {
			t.Fatal(err)
		}
		shot, err := chromedp.Run(ctx, chromedp.Screenshot(chromedp.CSS("#ex-site")))
		if err == nil {
			err = os.WriteFile(filepath.Join(dir, "site-events.png"), shot, 0o644)
		}
		if err != nil {
			t.Error(err)
		}
	}
}
