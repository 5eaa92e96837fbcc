package export

import (
	"context"
	"encoding/json"
	"fmt"
	"html"
	"path/filepath"
	"regexp"
	"slices"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/chromedp/chromedp"

	"github.com/kinmap/kinmap/timeline"
)

// cell writes a value read back from an output file as text in one form,
// whatever the reader: times RFC 3339 in UTC (the GeoPackage writes
// milliseconds, RFC 3339, 5.6), numbers in their shortest form, a null
// empty.
func cell(v any) string {
	switch v := v.(type) {
	case nil:
		return ""
	case time.Time:
		return v.UTC().Format(time.RFC3339)
	case int64:
		return strconv.FormatInt(v, 10)
	case float64:
		return strconv.FormatFloat(v, 'g', -1, 64)
	case string:
		if t, err := time.Parse(time.RFC3339Nano, v); err == nil {
			return t.UTC().Format(time.RFC3339)
		}
		return v
	}
	return fmt.Sprint(v)
}

// parquetByName reads a Parquet file with the independent reader of
// package parquettest, its values by column name, nil for a null.
func parquetByName(t *testing.T, b []byte) map[string][]any {
	t.Helper()
	out := map[string][]any{}
	for _, c := range parquetColumns(t, b) {
		out[c.Name] = c.Values
	}
	return out
}

// readBack reads a table of the fixture's outputs with each reader, as
// rows of cells in the order of columns: the CSV file with encoding/csv,
// the Parquet file with arrow-go, the GeoPackage table with the SQLite
// driver, and, for the shared conditions, run.json with encoding/json.
func readBack(t *testing.T, dir, csvFile, parquetFile, layer, runKey string, columns []string) map[string][][]string {
	t.Helper()
	out := map[string][][]string{}
	header, rows := readCSV(t, read(t, dir, csvFile))
	for _, r := range rows {
		var row []string
		for _, c := range columns {
			row = append(row, r[slices.Index(header, c)])
		}
		out["csv"] = append(out["csv"], row)
	}
	cols := parquetByName(t, read(t, dir, parquetFile))
	for i := range cols[columns[0]] {
		var row []string
		for _, c := range columns {
			v, ok := cols[c]
			if !ok {
				t.Fatalf("%s: no column %s", parquetFile, c)
			}
			row = append(row, cell(v[i]))
		}
		out["parquet"] = append(out["parquet"], row)
	}
	db := openGPKG(t, filepath.Join(dir, GeoPackageFile))
	var sel []string
	for _, c := range columns {
		sel = append(sel, fmt.Sprintf("%q || ''", c)) // DATETIME as its text
	}
	for _, r := range query(t, db, fmt.Sprintf("SELECT %s FROM %q ORDER BY fid", strings.Join(sel, ", "), layer)) {
		row := make([]string, len(r))
		for i, v := range r {
			row[i] = cell(v)
		}
		out["gpkg"] = append(out["gpkg"], row)
	}
	if runKey != "" {
		var info map[string]json.RawMessage
		if err := json.Unmarshal(read(t, dir, RunFile), &info); err != nil {
			t.Fatal(err)
		}
		var items []map[string]any
		if err := json.Unmarshal(info[runKey], &items); err != nil || items == nil {
			t.Fatalf("run.json %q: %v (%s)", runKey, err, info[runKey])
		}
		for _, it := range items {
			var row []string
			for _, c := range columns {
				v, ok := it[c]
				if !ok {
					t.Errorf("run.json %q: an item lacks %s", runKey, c)
				}
				if f, isNum := v.(float64); isNum && f == float64(int64(f)) && c != "p_value" {
					v = int64(f)
				}
				row = append(row, cell(v))
			}
			out["run.json"] = append(out["run.json"], row)
		}
	}
	return out
}

// The shared conditions of the run read back from shared.csv,
// shared.parquet, the GeoPackage's shared table and run.json are those of
// the run, with the labels of their regimes, and a condition that lasts to
// the last window has no end; the switches' onsets are the drifts' starts,
// empty when a switch had none (Onset equal to Time).
func TestSharedAndOnsetsReadBack(t *testing.T) {
	dir := written(t)
	m := fixtureModel()
	label := func(id int) (string, string) {
		for _, g := range m.Regimes {
			if g.ID == id {
				return g.Name, g.Status
			}
		}
		t.Fatalf("no regime %d", id)
		return "", ""
	}
	var shared [][]string
	for _, sh := range fixtureShared {
		end := ""
		if !sh.End.IsZero() {
			end = sh.End.Format(time.RFC3339)
		}
		name, status := label(sh.Regime)
		likeName, likeStatus := label(sh.Like)
		shared = append(shared, []string{sh.Start.Format(time.RFC3339), end, strconv.Itoa(sh.Regime), name, status,
			strconv.Itoa(sh.Like), likeName, likeStatus, strconv.Itoa(len(sh.Sites)), strconv.Itoa(sh.Of),
			strings.Join(sh.Sites, ","), strconv.FormatFloat(sh.P, 'g', -1, 64)})
	}
	var onsets [][]string
	for _, s := range fixtureSwitches {
		onset := ""
		if s.Onset.Before(s.Time) {
			onset = s.Onset.Format(time.RFC3339)
		}
		onsets = append(onsets, []string{s.Site, s.Time.Format(time.RFC3339), onset})
	}
	if onsets[0][2] == "" || onsets[1][2] != "" {
		t.Fatalf("the fixture should have one switch with an onset and one without: %v", onsets)
	}
	for _, tc := range []struct {
		name                        string
		csv, parquet, layer, runKey string
		columns                     []string
		want                        [][]string
		readers                     int
	}{
		{"shared", SharedCSVFile, SharedParquetFile, "shared", "shared_changes",
			[]string{"start", "end", "regime", "regime_name", "regime_status", "like_regime", "like_name", "like_status",
				"sites", "regime_sites", "site_ids", "p_value"}, shared, 4},
		{"onsets", SwitchesCSVFile, SwitchesParquetFile, "switches", "", []string{"site", "time", "onset"}, onsets, 3},
	} {
		t.Run(tc.name, func(t *testing.T) {
			got := readBack(t, dir, tc.csv, tc.parquet, tc.layer, tc.runKey, tc.columns)
			if len(got) != tc.readers {
				t.Errorf("%d readers, want %d", len(got), tc.readers)
			}
			for reader, rows := range got {
				if fmt.Sprintf("%q", rows) != fmt.Sprintf("%q", tc.want) {
					t.Errorf("%s:\n got %q\nwant %q", reader, rows, tc.want)
				}
			}
		})
	}
}

// A switch that is part of a shared condition (timeline.Shared.Holds)
// names the condition's start in switches.csv, switches.parquet and the
// GeoPackage's switches table, so that a GIS user can filter them; a
// switch of the site's own leaves it empty (NULL).
func TestSwitchesNameTheirSharedCondition(t *testing.T) {
	r := fixtureRun()
	// T-7 switched from 1 to 3 on day 2, which a condition of regime 1
	// that looked like regime 3 from day 1 to day 3 holds; PS-01's switch
	// (1 to 2) is its own.
	held := timeline.Shared{Start: day0.AddDate(0, 0, 1), End: day0.AddDate(0, 0, 3), Regime: 1, Like: 3, Sites: []string{"PS-02", "T-7"}, Of: 3, P: 1e-3}
	r.Shared = append([]timeline.Shared{held}, r.Shared...)
	if !held.Holds(r.Switches[1]) || held.Holds(r.Switches[0]) {
		t.Fatalf("the fixture's switches are not the ones this test means: %+v", r.Switches)
	}
	dir := t.TempDir()
	if err := Write(dir, r); err != nil {
		t.Fatal(err)
	}
	want := [][]string{{"PS-01", "1", ""}, {"T-7", "1", held.Start.Format(time.RFC3339)}}
	got := readBack(t, dir, SwitchesCSVFile, SwitchesParquetFile, "switches", "", []string{"site", "from_regime", "shared_start"})
	if len(got) != 3 {
		t.Errorf("%d readers, want 3", len(got))
	}
	for reader, rows := range got {
		if fmt.Sprintf("%q", rows) != fmt.Sprintf("%q", want) {
			t.Errorf("%s:\n got %q\nwant %q", reader, rows, want)
		}
	}
}

// A run without shared conditions still writes the tables, header only,
// and an empty list in run.json, so that readers find the same columns
// and keys every time.
func TestNoSharedConditions(t *testing.T) {
	dir := t.TempDir()
	r := fixtureRun()
	r.Shared = nil
	if err := Write(dir, r); err != nil {
		t.Fatal(err)
	}
	header, rows := readCSV(t, read(t, dir, SharedCSVFile))
	if len(header) != len(sharedColumns) || len(rows) != 0 {
		t.Errorf("shared.csv: header %v, %d rows; want %d columns, no rows", header, len(rows), len(sharedColumns))
	}
	var info struct {
		Shared *[]json.RawMessage `json:"shared_changes"`
	}
	if err := json.Unmarshal(read(t, dir, RunFile), &info); err != nil || info.Shared == nil || len(*info.Shared) != 0 {
		t.Errorf("run.json shared_changes %v (%v), want []", info.Shared, err)
	}
	if doc := string(read(t, dir, ReportFile)); !strings.Contains(doc, "<p>None: no regime had most of its sites") {
		t.Error("the report does not say that there were no fleet-wide changes")
	}
}

// sectionRows returns the text of the cells of each body row of the
// report's section id, tags removed and entities decoded.
func sectionRows(t *testing.T, doc, id string) [][]string {
	t.Helper()
	_, sec, ok := strings.Cut(doc, `<section id="`+id+`">`)
	if !ok {
		t.Fatalf("report has no section %s", id)
	}
	sec, _, _ = strings.Cut(sec, "</section>")
	_, body, _ := strings.Cut(sec, "<tbody>")
	tags := regexp.MustCompile(`<[^>]*>`)
	var out [][]string
	for _, tr := range regexp.MustCompile(`(?s)<tr>(.*?)</tr>`).FindAllStringSubmatch(body, -1) {
		var row []string
		for _, td := range regexp.MustCompile(`(?s)<td[^>]*>(.*?)</td>`).FindAllStringSubmatch(tr[1], -1) {
			row = append(row, html.UnescapeString(tags.ReplaceAllString(td[1], "")))
		}
		out = append(out, row)
	}
	return out
}

// The report's fleet-wide changes give each shared condition of the
// fixture, with the label of a labelled regime and "the last window" for
// one that had not ended, and the switch table gives each switch's drift
// onset, "–" for T-7's switch, which had none. The expected text is
// written by hand from the fixture.
func TestReportSharedAndOnsets(t *testing.T) {
	doc := string(read(t, written(t), ReportFile))
	for _, tc := range []struct {
		section string
		want    [][]string
	}{
		{"shared", [][]string{
			{"2025-03-02 00:00 UTC", "2025-03-04 00:00 UTC", "3", `2 (worn bearing, "B")`, "2 of 2", "PS-02, T-7", "0.0042"},
			{"2025-03-05 00:00 UTC", "the last window", "1", "3", "1 of 1", "PS-01", "< 0.001"},
		}},
		{"switches", [][]string{
			{"PS-01", "2025-03-04 00:00 UTC", "1", "2", "3", "3", "0.90", "2025-03-02 00:00 UTC"},
			{"T-7", "2025-03-03 00:00 UTC", "1", "3", "2", "3", "0.75", "–"},
		}},
	} {
		if got := sectionRows(t, doc, tc.section); fmt.Sprintf("%q", got) != fmt.Sprintf("%q", tc.want) {
			t.Errorf("section %s:\n got %q\nwant %q", tc.section, got, tc.want)
		}
	}
}

// openExplorerRun writes explorerRun and opens its explorer in chromium.
func openExplorerRun(t *testing.T) context.Context {
	t.Helper()
	ctx := chromiumContext(t, 60*time.Second)
	dir := t.TempDir()
	if err := Write(dir, explorerRun()); err != nil {
		t.Fatal(err)
	}
	if _, err := openExplorer(ctx, filepath.Join(dir, ReportFile)); err != nil {
		t.Fatalf("chromium: %v", err)
	}
	return ctx
}

// A site page of the explorer veils the days of each shared condition the
// site showed on its regime strip, titled with its days and regimes, and
// lists them under the strip; a site that showed none has none.
// The expected titles are built from the fixture's conditions.
func TestExplorerSharedDays(t *testing.T) {
	ctx := openExplorerRun(t)
	minute := func(t time.Time) string { return t.UTC().Format("2006-01-02 15:04") + " UTC" }
	for _, site := range []string{"PS-01", "PS-02", "T-7", "X-9"} {
		var want []string
		for _, sh := range fixtureShared {
			if !slices.Contains(sh.Sites, site) {
				continue
			}
			until := " to the last window"
			if !sh.End.IsZero() {
				until = " to " + minute(sh.End)
			}
			want = append(want, fmt.Sprintf("%s%s: like most sites of regime %d, looked like regime %d (a fleet-wide change, not a switch)",
				minute(sh.Start), until, sh.Regime, sh.Like))
		}
		if heading, err := openSitePage(ctx, site); err != nil || heading != "Site "+site {
			t.Fatalf("after #site=%s the site page is %q (%v)", site, heading, err)
		}
		marks, err := chromedp.Run(ctx, chromedp.Evaluate[[]string](`Array.from(document.querySelectorAll("#ex-site .strip path.shared")).map(e => e.querySelector("title").textContent)`))
		if err != nil {
			t.Fatal(err)
		}
		items, err := chromedp.Run(ctx, chromedp.Evaluate[[]string](`Array.from(document.querySelectorAll("#ex-site ul.shared-days li")).map(e => e.textContent)`))
		if err != nil {
			t.Fatal(err)
		}
		if !slices.Equal(marks, want) || !slices.Equal(items, want) {
			t.Errorf("%s: strip marks %q, list %q; want %q", site, marks, items, want)
		}
	}
}

// A site page of the explorer brackets the drift before each switch that
// had one, from its onset, titled with it; a switch without a drift (T-7's)
// has none.
func TestExplorerDriftOnsets(t *testing.T) {
	ctx := openExplorerRun(t)
	for _, site := range []string{"PS-01", "T-7", "X-9"} {
		var want []string
		for _, s := range fixtureSwitches {
			if s.Site == site && s.Onset.Before(s.Time) {
				want = append(want, fmt.Sprintf("drift towards regime %d from %s UTC", s.To, s.Onset.UTC().Format("2006-01-02 15:04")))
			}
		}
		if heading, err := openSitePage(ctx, site); err != nil || heading != "Site "+site {
			t.Fatalf("after #site=%s the site page is %q (%v)", site, heading, err)
		}
		got, err := chromedp.Run(ctx, chromedp.Evaluate[[]string](`Array.from(document.querySelectorAll("#ex-site .strip path.onset")).map(e => e.querySelector("title").textContent)`))
		if err != nil {
			t.Fatal(err)
		}
		if !slices.Equal(got, want) {
			t.Errorf("%s: drift marks %q, want %q", site, got, want)
		}
	}
}
