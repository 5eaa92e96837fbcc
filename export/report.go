package export

import (
	"cmp"
	"embed"
	"encoding/base64"
	"encoding/json"
	"fmt"
	"html/template"
	"io"
	"maps"
	"slices"
	"strconv"
	"strings"
	"time"

	"github.com/kinmap/kinmap/export/picture"
	"github.com/kinmap/kinmap/model"
)

// reportFiles holds the page, the templates of its sections (one
// report_NAME.html file each, defining NAME) and the explorer's script.
//
//go:embed report*.html explorer.js
var reportFiles embed.FS

// reportTemplate is parsed for each report; it is cheap and keeps the
// package free of init-time work. Every report*.html file joins it, so that
// a section's file only has to be added.
func reportTemplate() (*template.Template, error) {
	return template.New(ReportFile).Funcs(template.FuncMap{"swatch": swatch, "readable": readable, "sites": siteList}).ParseFS(reportFiles, "report*.html")
}

// maxSwitchRows caps the switch table; switches.csv has them all.
const maxSwitchRows = 500

// maxUnfamiliarSites caps the list of sites with unfamiliar windows.
const maxUnfamiliarSites = 20

type fact struct{ Label, Value string }

type reportPicture struct {
	Title, Caption, File string
	Src                  template.HTMLAttr // the src attribute
}

type reportRegime struct {
	ID          int
	Description string
	Units       int
	Sites       int
	Windows     int
	Share       string
}

type reportSwitch struct {
	Site, Time    string
	From, To      int
	Before, After int
	Confidence    string
	Onset         string // the start of the drift that led to it; "" for none
}

type siteCount struct {
	Site  string
	Count int
}

type reportData struct {
	Title           string
	Run, Data, Map  []fact
	Warnings        []string
	Pictures        []reportPicture
	Regimes         []reportRegime
	Changes         []string
	Switches        []reportSwitch
	SwitchesTotal   int
	Windows         int
	Unfamiliar      int
	UnfamiliarSites []siteCount
	MoreUnfamiliar  int
	Files           []string
	Details         string
	Events          *eventsSection // known events; nil without label knowledge
	Explorer        template.JS    // the explorer's data, a JSON object
	Daily           template.JS    // the sites' daily summaries, a JSON object
	Script          template.JS    // the explorer's script
	Triage          triageData
	Labels          *labelsSection // regimes in engineering terms (report_labels.html)
	Shared          sharedSection  // fleet-wide changes (report_shared.html)
}

func writeReport(w io.Writer, r *Run, ss []*site, tracks []*feature, warnings []string, pics []picture.Picture, files []string) error {
	t, err := reportTemplate()
	if err != nil {
		return err
	}
	script, err := reportFiles.ReadFile("explorer.js")
	if err != nil {
		return err
	}
	data, daily, err := explorerJSON(r, ss, tracks)
	if err != nil {
		return err
	}
	// Both are built here: the JSON escapes <, > and & (encoding/json), so
	// neither can close its script element.
	d := reportData{Title: cmp.Or(r.Title, "kinmap run"), Windows: len(r.Table.Windows), SwitchesTotal: len(r.Switches),
		Explorer: template.JS(data), Daily: template.JS(daily), Script: template.JS(script)}
	d.Warnings = once(r.Warnings, r.Model.Quality.Warnings, warnings)
	d.Files = append(slices.Clone(files), ReportFile)
	for _, p := range pics {
		d.Pictures = append(d.Pictures, reportPicture{
			Title: p.Title, Caption: p.Caption, File: p.File,
			// Built here from PNG bytes, so safe to mark as an attribute;
			// as a URL each + of the base64 would be escaped into five bytes.
			Src: template.HTMLAttr(`src="data:image/png;base64,` + base64.StdEncoding.EncodeToString(p.PNG) + `"`),
		})
	}

	perRegime := map[int]int{} // windows
	sitesIn := map[int]int{}   // sites by last regime
	var unfamiliar []siteCount
	for _, e := range r.Table.Windows {
		perRegime[e.Regime]++
		if e.Unfamiliar {
			d.Unfamiliar++
		}
	}
	for _, s := range ss {
		sitesIn[s.last.Regime]++
		if s.unfamiliar > 0 {
			unfamiliar = append(unfamiliar, siteCount{s.id, s.unfamiliar})
		}
	}
	slices.SortStableFunc(unfamiliar, func(a, b siteCount) int { return cmp.Compare(b.Count, a.Count) })
	if len(unfamiliar) > maxUnfamiliarSites {
		d.MoreUnfamiliar = len(unfamiliar) - maxUnfamiliarSites
		unfamiliar = unfamiliar[:maxUnfamiliarSites]
	}
	d.UnfamiliarSites = unfamiliar
	for _, g := range r.Model.Regimes {
		d.Regimes = append(d.Regimes, reportRegime{
			ID: g.ID, Description: g.Description, Units: len(g.Units),
			Sites: sitesIn[g.ID], Windows: perRegime[g.ID], Share: percent(perRegime[g.ID], len(r.Table.Windows)),
		})
	}
	for _, c := range r.Changes {
		d.Changes = append(d.Changes, describeChange(c))
	}
	for i, s := range r.Switches {
		if i == maxSwitchRows {
			break
		}
		d.Switches = append(d.Switches, reportSwitch{
			Site: s.Site, Time: readable(s.Time), From: s.From, To: s.To,
			Before: s.Before, After: s.After, Confidence: strconv.FormatFloat(s.Confidence, 'f', 2, 64),
		})
		if s.Onset.Before(s.Time) {
			d.Switches[i].Onset = readable(s.Onset)
		}
	}

	d.Run = []fact{
		{"Sites", strconv.Itoa(len(ss))},
		{"Windows", strconv.Itoa(len(r.Table.Windows))},
		{"Regimes", strconv.Itoa(len(r.Model.Regimes))},
		{"Switches", strconv.Itoa(len(r.Switches))},
		{"Unfamiliar windows", fmt.Sprintf("%d (%s)", d.Unfamiliar, percent(d.Unfamiliar, len(r.Table.Windows)))},
	}
	if skipped := r.Table.SkippedWindows(); skipped > 0 {
		d.Run = append(d.Run, fact{"Windows skipped", strconv.Itoa(skipped)})
	}
	d.Events = eventsReport(r, ss)
	d.Triage = triageOf(r)
	d.Labels = labelsData(r)
	d.Shared = sharedReport(r)
	d.Data = dataFacts(r)
	d.Map = mapFacts(r.Model, r.RegimeNote)
	if r.Info != nil {
		b, err := json.MarshalIndent(r.Info, "", "  ")
		if err != nil {
			return err
		}
		d.Details = string(b)
	}
	return t.ExecuteTemplate(w, ReportFile, d)
}

// once returns the strings of the lists in order, each once: the
// caller may pass on the model's and Write's own warnings in r.Warnings.
func once(lists ...[]string) []string {
	seen := make(map[string]bool)
	var out []string
	for _, l := range lists {
		for _, s := range l {
			if !seen[s] {
				seen[s] = true
				out = append(out, s)
			}
		}
	}
	return out
}

func dataFacts(r *Run) []fact {
	s := r.Summary
	if s == nil {
		return nil
	}
	var names []string
	for _, f := range s.Files {
		names = append(names, fmt.Sprintf("%s (%s, %d rows)", f.Path, f.Format, f.Rows))
	}
	out := []fact{
		{"Files", strings.Join(names, "; ")},
		{"Layout", s.Layout},
		{"Rows read", strconv.FormatInt(s.Rows, 10)},
		{"Readings kept", strconv.FormatInt(s.Readings, 10)},
		{"Sites", strconv.Itoa(s.Sites)},
		{"Channels", strings.Join(s.Channels, ", ")},
	}
	if !s.Start.IsZero() {
		out = append(out, fact{"Period", readable(s.Start) + " to " + readable(s.End)})
	}
	for _, reason := range slices.Sorted(maps.Keys(s.Dropped)) {
		out = append(out, fact{"Dropped (" + reason + ")", strconv.FormatInt(s.Dropped[reason], 10)})
	}
	if s.Duplicates > 0 {
		out = append(out, fact{"Duplicate readings resolved", strconv.FormatInt(s.Duplicates, 10)})
	}
	if len(s.SkippedColumns) > 0 {
		out = append(out, fact{"Columns skipped", strings.Join(s.SkippedColumns, ", ")})
	}
	if s.NaiveTime {
		out = append(out, fact{"Time zone", "timestamps without UTC adjustment were read as UTC"})
	}
	if len(s.Unregistered) > 0 {
		out = append(out, fact{"Sites not in the register", strconv.Itoa(len(s.Unregistered))})
	}
	return out
}

// mapFacts describes the map of m; note, when set, says how the number of
// regimes was reached (Run.RegimeNote).
func mapFacts(m *model.Model, note string) []fact {
	l := m.Map.Lattice
	cells, surface := l.Cells()+", 4 neighbours", l.Surface()+", wraps both ways"
	if l.Hex {
		cells = l.Cells() + ", 6 neighbours"
	}
	if l.Flat {
		surface = l.Surface() + ", ends at its edges"
	}
	facts := []fact{
		{"Grid", fmt.Sprintf("%d × %d units", l.Cols, l.Rows)},
		{"Cells", cells},
		{"Surface", surface},
		{"Features", strconv.Itoa(m.Map.Dim)},
		{"Training windows", strconv.Itoa(m.Windows)},
		{"Quantization error (mean)", strconv.FormatFloat(m.Quality.QE, 'g', 4, 64)},
		{"Topographic error", percent1(m.Quality.TE)},
		{"Units without windows", percent1(m.Quality.Unused)},
	}
	switch {
	case note != "":
		facts = append(facts, fact{"Regimes", note})
	case m.Choice != nil:
		facts = append(facts, fact{"Regimes", m.Choice.String()})
	}
	if len(m.Scores) > 0 {
		parts := make([]string, len(m.Scores))
		for i, sc := range m.Scores {
			parts[i] = fmt.Sprintf("%d: %.2f", sc.K, sc.DaviesBouldin)
		}
		facts = append(facts, fact{"Regimes chosen by the Davies–Bouldin index (lower is better; a number of regimes given is used as it is)", strings.Join(parts, " · ")})
	}
	return facts
}

// readable is a time for people: UTC to the minute, or to the second when
// it has seconds.
func readable(t time.Time) string {
	t = t.UTC()
	if t.Second() != 0 || t.Nanosecond() != 0 {
		return t.Format("2006-01-02 15:04:05") + " UTC"
	}
	return t.Format("2006-01-02 15:04") + " UTC"
}

func percent(n, of int) string {
	if of == 0 {
		return "–"
	}
	return percent1(float64(n) / float64(of))
}

func percent1(share float64) string { return strconv.FormatFloat(100*share, 'f', 1, 64) + " %" }

// swatch is the CSS background of a regime's colour.
func swatch(id int) template.CSS {
	return template.CSS("background:" + hex(picture.RegimeColour(id)))
}

// describeChange writes one change of regime numbers as a sentence.
func describeChange(c model.RegimeChange) string {
	list := func(ids []int) string {
		parts := make([]string, len(ids))
		for i, id := range ids {
			parts[i] = strconv.Itoa(id)
		}
		return strings.Join(parts, " and ")
	}
	switch c.Kind {
	case model.ChangeRenumbered:
		return fmt.Sprintf("The regime found as number %s matches earlier regime %s and takes its number.", list(c.From), list(c.To))
	case model.ChangeNew:
		return fmt.Sprintf("Regime %s is new: it matches no earlier regime.", list(c.To))
	case model.ChangeGone:
		return fmt.Sprintf("Earlier regime %s matches no regime of the updated map.", list(c.From))
	case model.ChangeSplit:
		return fmt.Sprintf("Earlier regime %s split into regimes %s.", list(c.From), list(c.To))
	case model.ChangeMerged:
		return fmt.Sprintf("Earlier regimes %s merged into regime %s.", list(c.From), list(c.To))
	}
	return fmt.Sprintf("%s: %v → %v", c.Kind, c.From, c.To)
}
