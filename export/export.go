// Package export writes the outputs of a run into a folder: GeoJSON layers
// for GIS, the regime timeline and switch events as Parquet and CSV, the
// feature table, the model, a machine-readable summary, pictures and a
// self-contained HTML report.
package export

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"time"

	"github.com/kinmap/kinmap/attention"
	"github.com/kinmap/kinmap/export/picture"
	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/ingest"
	"github.com/kinmap/kinmap/internal/atomicfile"
	"github.com/kinmap/kinmap/model"
	"github.com/kinmap/kinmap/timeline"
)

// The names of the files Write makes. Pictures are named by package
// picture.
const (
	SitesFile           = "sites.geojson"
	RegimesFile         = "regimes.geojson"
	TracksFile          = "tracks.geojson"
	GeoPackageFile      = "kinmap.gpkg"
	TimelineParquetFile = "timeline.parquet"
	TimelineCSVFile     = "timeline.csv"
	SwitchesCSVFile     = "switches.csv"
	SwitchesParquetFile = "switches.parquet"
	FeaturesFile        = "features.parquet"
	ModelFile           = "model"
	RunFile             = "run.json"
	ReportFile          = "report.html"
)

// Run is everything the outputs of one run are made from.
type Run struct {
	Model    *model.Model
	Table    *features.Table // the windows, placed, classified by events and decoded (timeline.Build), and mobile sites' paths
	Switches []timeline.Switch
	Register *ingest.Register     // nil when there is none
	Summary  *ingest.Summary      // what was read; nil when unknown
	Info     any                  // machine-readable run summary, written as run.json
	Changes  []model.RegimeChange // regime renumbering by an update, listed in the report
	Warnings []string             // from earlier stages, shown in the report, each warning once
	Daily    []DailySummary       // the readings by site, channel and UTC day (DailySummaries), drawn by the report; nil for none
	Title    string               // heading of the report; "" means "kinmap run"
	// Conditions is the label knowledge from events; nil when there is
	// none. Each window's likely condition is on the window.
	Conditions *Conditions

	// Shared are the conditions that most sites of a regime showed
	// together (timeline.Result.Shared), by start.
	Shared []timeline.Shared

	// The work list, the data health and the comparison with the previous
	// period of the history (nil without one).
	Attention []attention.Row
	Health    []Finding
	Against   *Comparison
	// WorkList holds the thresholds the work list was made with, which
	// the report states; zero fields read as attention.DefaultConfig's.
	WorkList attention.Config

	// Levels are the typical raw levels of the channels by regime, which
	// the regime descriptions give in the channels' units; nil for the
	// standardised differences alone.
	Levels *Levels

	// RegimeNote says how the number of regimes was reached, as the run
	// summary does, phases (model.Phase) included; "" for the model's
	// choice in its own words (mapper.Choice.String), which know nothing
	// of phases.
	RegimeNote string
}

// Write writes the outputs of r into dir, creating it if needed.
//
// sites.geojson is an RFC 7946 FeatureCollection of one Point per site
// (longitude, latitude in WGS 84, 6 decimals): a fixed site at its
// registered position, else its last located window's; a mobile site at
// its last known position (the end of its path, features.Table.Paths, or
// its last located window's centroid); a site with no position has a null
// geometry (see Warnings). Its properties, flat for GIS tools and the same
// whatever the number of regimes: site; every register attribute with its
// own type (renamed register_NAME when kinmap uses NAME itself); regime
// (the last window's); dominant_regime (most windows, the lower ID on a
// tie); shares, an object giving the share of windows in each regime of
// the model by regime ID; windows; switches (count); last_switch (RFC
// 3339, or null); last_switch_onset (the start of the drift that led to
// it, or null when it had none); col and row (the last window's BMU cell); qe (mean
// quantization error); unfamiliar (true when any window was unfamiliar);
// unfamiliar_windows; mobile; home_lon and home_lat, the registered
// position (null when none).
//
// regimes.geojson holds one MultiPoint per regime of the model, made of the
// located sites whose last window is in it (null when none), with regime,
// description, colour (hex, as in the pictures), sites (count), site_ids
// (comma-separated) and units (map units).
//
// tracks.geojson, written only when some site is mobile (its windows have
// more than one distinct position), holds a LineString per mobile site and
// regime segment, drawn through the site's path at features.PathStep and
// simplified (see trackFeatures), with site, regime, start, end, windows
// and colour.
//
// timeline.parquet and timeline.csv hold one row per window (site,
// window_start, window_end, col, row, regime, qe, unfamiliar), switches.csv
// and switches.parquet one per switch (site, time, from_regime, to_regime,
// windows_before, windows_after, confidence, from_name, from_status,
// to_name, to_status, onset: the start of the drift that led to it, empty
// or null when none was found; shared_start: the start of the shared
// condition it is part of, timeline.Shared.Holds, empty or null for a
// switch of the site's own), by site and time; shared.csv and
// shared.parquet one per shared condition, r.Shared (start; end, empty or
// null while it lasts to the last window; regime, regime_name,
// regime_status; like_regime, like_name, like_status: the regime its
// sites looked like; sites that showed it; regime_sites, the regime's
// sites with a window in it; site_ids, comma-separated; p_value), by
// start; CSV times
// are RFC 3339 in UTC, Parquet times TIMESTAMP in microseconds adjusted to
// UTC. Then come features.parquet, the model file, attention.csv and
// attention.parquet (the work list, r.Attention: rank, level, kind, site,
// sites, site_ids, reason, time, from_regime, to_regime, confidence, news;
// the switch columns empty or null for a row no switch set), health.csv
// (r.Health: kind, site, channel, count, share, warning, detail), run.json
// (r.Info as JSON), the pictures of package picture and report.html.
//
// run.json also gets a "shared_changes" list, the rows of shared.csv,
// and a "files" list: the files of dir this run wrote.
//
// Write commits the files together (see Stage); it waits at most a minute
// for another run writing into dir.
func Write(dir string, r *Run) error {
	tx, err := atomicfile.Begin(dir, nil, time.Minute)
	if err != nil {
		return fmt.Errorf("export: %w", err)
	}
	defer tx.Abort()
	if err := Stage(tx, dir, r); err != nil {
		return err
	}
	if err := tx.Commit(); err != nil {
		return fmt.Errorf("export: %w", err)
	}
	return nil
}

// Stage writes the outputs of r into dir as part of tx, whose folders
// must include dir: they appear when tx commits, together with its other
// files, or not at all. The outputs an earlier run listed in its run.json
// and this run does not make, such as tracks.geojson or a picture, are
// removed with the commit, so that the folder never mixes two runs. Files
// that no kinmap run wrote are never replaced nor removed: an output whose
// name is taken by one is refused (see CheckDir).
func Stage(tx *atomicfile.Tx, dir string, r *Run) error {
	if err := check(r); err != nil {
		return err
	}
	owned, err := CheckDir(dir)
	if err != nil {
		return err
	}
	saved := r.Model // written as it is; the outputs show the descriptions in engineering terms
	r = described(r)
	ss, warnings := sites(r)
	pics, err := picture.All(pictureInput(r, ss))
	if err != nil {
		return fmt.Errorf("export: pictures: %w", err)
	}
	type file struct {
		name  string
		write func(io.Writer) error
	}
	sites, regimes, tracks := siteFeatures(r, ss), regimeFeatures(r, ss), trackFeatures(r, ss)
	tl, sw, sh := timelineRows(r, ss), switchRows(r), sharedRows(r)
	files := []file{
		{SitesFile, func(w io.Writer) error { return writeCollection(w, sites) }},
		{RegimesFile, func(w io.Writer) error { return writeCollection(w, regimes) }},
	}
	if len(tracks) > 0 {
		files = append(files, file{TracksFile, func(w io.Writer) error { return writeCollection(w, tracks) }})
	}
	files = append(files,
		file{TimelineParquetFile, func(w io.Writer) error { return writeParquet(w, tl) }},
		file{TimelineCSVFile, func(w io.Writer) error { return writeCSV(w, timelineColumns, tl) }},
		file{SwitchesCSVFile, func(w io.Writer) error { return writeCSV(w, switchColumns, sw) }},
		file{SwitchesParquetFile, func(w io.Writer) error { return writeParquet(w, sw) }},
		file{SharedCSVFile, func(w io.Writer) error { return writeCSV(w, sharedColumns, sh) }},
		file{SharedParquetFile, func(w io.Writer) error { return writeParquet(w, sh) }},
		file{GeoPackageFile, func(w io.Writer) error {
			layers, err := gpkgLayers(sites, regimes, tracks, tl, sw, sh)
			if err != nil {
				return err
			}
			return writeGeoPackage(w, layers)
		}},
		file{FeaturesFile, func(w io.Writer) error { return writeFeatures(w, r.Table) }},
		file{ModelFile, saved.Write},
		file{AttentionCSVFile, func(w io.Writer) error { return writeCSV(w, attentionColumns, attentionRows(r.Attention)) }},
		file{AttentionParquetFile, func(w io.Writer) error { return writeParquet(w, attentionRows(r.Attention)) }},
		file{HealthFile, func(w io.Writer) error { return writeCSV(w, healthColumns, healthRows(r.Health)) }},
	)
	for _, p := range pics {
		files = append(files, file{p.File, func(w io.Writer) error { _, err := w.Write(p.PNG); return err }})
	}
	var listed []string // by the report, which adds itself
	for _, f := range files {
		listed = append(listed, f.name)
	}
	listed = append(listed, RunFile)
	all := append(slices.Clone(listed), ReportFile)
	files = append(files,
		file{RunFile, func(w io.Writer) error { return writeRunFile(w, r.Info, sh, all) }},
		file{ReportFile, func(w io.Writer) error { return writeReport(w, r, ss, tracks, warnings, pics, listed) }},
	)
	for _, f := range files {
		if err := tx.Create(filepath.Join(dir, f.name), f.write); err != nil {
			return fmt.Errorf("export: %w", err)
		}
	}
	for _, name := range owned {
		if !slices.Contains(all, name) {
			if err := tx.Remove(filepath.Join(dir, name)); err != nil {
				return fmt.Errorf("export: %w", err)
			}
		}
	}
	return nil
}

// writeRunFile writes info, a JSON object or nil, indented, with shared
// added as "shared_changes" and files as "files".
func writeRunFile(w io.Writer, info any, shared []sharedRow, files []string) error {
	b, err := json.Marshal(info)
	if err != nil {
		return err
	}
	if string(b) == "null" { // no summary: run.json lists the files only
		b = []byte("{}")
	}
	if len(b) < 2 || b[0] != '{' {
		return fmt.Errorf("the run summary is not a JSON object")
	}
	changes, err := json.Marshal(shared)
	if err != nil {
		return err
	}
	list, err := json.Marshal(files)
	if err != nil {
		return err
	}
	sep := ","
	if string(b) == "{}" {
		sep = ""
	}
	b = append(b[:len(b)-1:len(b)-1], sep+`"shared_changes":`...)
	b = append(append(append(append(b, changes...), `,"files":`...), list...), '}')
	var out bytes.Buffer
	if err := json.Indent(&out, b, "", "  "); err != nil {
		return err
	}
	out.WriteByte('\n')
	_, err = w.Write(out.Bytes())
	return err
}

// CheckDir reports which output files of the folder dir an earlier kinmap
// run wrote, as its run.json lists them, and refuses a folder where a name
// that a run may write is taken by a file none wrote: kinmap never
// replaces nor removes a file it did not make. A run.json written before
// the list existed owns every output name. A folder that does not exist
// is fine; a path that is not a folder is refused.
func CheckDir(dir string) ([]string, error) {
	info, err := os.Stat(dir)
	switch {
	case errors.Is(err, fs.ErrNotExist):
		return nil, nil
	case err != nil:
		return nil, fmt.Errorf("export: %w", err)
	case !info.IsDir():
		return nil, &NotFolderError{Path: dir}
	}
	names := outputNames()
	var owned []string
	if b, err := os.ReadFile(filepath.Join(dir, RunFile)); err == nil {
		var prev struct {
			Tool  string    `json:"tool"`
			Files *[]string `json:"files"`
		}
		switch {
		case json.Unmarshal(b, &prev) != nil:
		case prev.Files != nil:
			owned = append(*prev.Files, RunFile)
		case prev.Tool == "kinmap":
			owned = names
		}
	}
	var there, foreign []string
	for _, name := range names {
		if _, err := os.Lstat(filepath.Join(dir, name)); err != nil {
			continue
		}
		if slices.Contains(owned, name) {
			there = append(there, name)
		} else {
			foreign = append(foreign, name)
		}
	}
	if len(foreign) > 0 {
		return nil, &ForeignFilesError{Dir: dir, Files: foreign}
	}
	return there, nil
}

// outputNames returns every name Write may give a file.
func outputNames() []string {
	return append([]string{SitesFile, RegimesFile, TracksFile, GeoPackageFile, TimelineParquetFile, TimelineCSVFile, SwitchesCSVFile,
		SwitchesParquetFile, SharedCSVFile, SharedParquetFile, FeaturesFile, ModelFile, RunFile, ReportFile, AttentionCSVFile, AttentionParquetFile, HealthFile}, picture.Files()...)
}

// IsOutput reports whether Write may write a file called name.
func IsOutput(name string) bool { return slices.Contains(outputNames(), name) }

// NotFolderError is an output folder path that names something else, such
// as a file.
type NotFolderError struct{ Path string }

func (e *NotFolderError) Error() string {
	return fmt.Sprintf("export: %s is not a folder", e.Path)
}

// ForeignFilesError is an output folder holding files under the names of
// kinmap's outputs that no kinmap run wrote (no run.json there lists
// them), which kinmap refuses to replace.
type ForeignFilesError struct {
	Dir   string
	Files []string
}

func (e *ForeignFilesError) Error() string {
	return fmt.Sprintf("export: %s holds %s, which no kinmap run wrote there; kinmap will not replace them", e.Dir, strings.Join(e.Files, ", "))
}

// Warnings returns what Write will warn about in the report, for example a
// site with no position, so that a caller can add it to the run summary.
func Warnings(r *Run) ([]string, error) {
	if err := check(r); err != nil {
		return nil, err
	}
	_, w := sites(r)
	return w, nil
}

// check reports whether the parts of r fit together.
func check(r *Run) error {
	switch {
	case r == nil || r.Model == nil || r.Table == nil:
		return fmt.Errorf("export: a run needs a model and a feature table")
	}
	units := r.Model.Map.Lattice.Units()
	for _, w := range r.Table.Windows {
		if w.Unit < 0 || w.Unit >= units {
			return fmt.Errorf("export: site %q, window %s: unit %d outside the map's %d units", w.Site, rfc3339(w.Start), w.Unit, units)
		}
	}
	return nil
}

// regimeIDs returns the model's regime IDs in ascending order.
func regimeIDs(r *Run) []int {
	ids := make([]int, len(r.Model.Regimes))
	for i, g := range r.Model.Regimes {
		ids[i] = g.ID
	}
	slices.Sort(ids)
	return ids
}

func pictureInput(r *Run, ss []*site) picture.Input {
	in := picture.Input{Model: r.Model, Windows: r.Table.Windows, Switches: r.Switches}
	if c := r.Conditions; c != nil {
		in.Conditions = &model.Conditions{Labels: c.Labels, Counts: c.UnitCounts}
	}
	for _, s := range ss {
		in.Sites = append(in.Sites, picture.SitePoint{ID: s.id, Lon: s.lon, Lat: s.lat, Located: s.located, Regime: s.last.Regime})
	}
	return in
}
