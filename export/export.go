// Package export writes the outputs of a run into a folder: GeoJSON layers
// for GIS, the regime timeline and switch events as Parquet and CSV, the
// feature table, the model, a machine-readable summary, pictures and a
// self-contained HTML report.
package export

import (
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"slices"

	"github.com/kinmap/kinmap/export/picture"
	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/ingest"
	"github.com/kinmap/kinmap/mapper"
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
	Model       *mapper.Model
	Table       *features.Table     // the windows, with their positions, and mobile sites' paths
	Assignments []mapper.Assignment // one per Table.Windows entry
	Entries     []timeline.Entry    // one per Table.Windows entry, in the same order (timeline.Build)
	Switches    []timeline.Switch
	Register    *ingest.Register      // nil when there is none
	Summary     *ingest.Summary       // what was read; nil when unknown
	Info        any                   // machine-readable run summary, written as run.json
	Changes     []mapper.RegimeChange // regime renumbering by an update, listed in the report
	Warnings    []string              // from earlier stages, shown in the report, each warning once
	Title       string                // heading of the report; "" means "kinmap run"
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
// 3339, or null); col and row (the last window's BMU cell); qe (mean
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
// windows_before, windows_after, confidence), by site and time; CSV times
// are RFC 3339 in UTC, Parquet times TIMESTAMP in microseconds adjusted to
// UTC. Then come features.parquet, the model file, run.json (r.Info as
// JSON), the pictures of package picture and report.html.
//
// Every file is first written in full as a hidden temporary file in dir;
// only when all were written are they renamed into place, so that a
// failure leaves neither a half-written file nor a mix of this run's and an
// earlier run's outputs (short of a failing rename). Then the optional
// outputs this run did not make, tracks.geojson and the pictures (see
// picture.Files), are removed if an earlier run left them.
func Write(dir string, r *Run) error {
	if err := check(r); err != nil {
		return err
	}
	ss, warnings := sites(r)
	pics, err := picture.All(pictureInput(r, ss))
	if err != nil {
		return fmt.Errorf("export: pictures: %w", err)
	}
	st, err := newStage(dir)
	if err != nil {
		return err
	}
	sites, regimes, tracks := siteFeatures(r, ss), regimeFeatures(r, ss), trackFeatures(r, ss)
	st.add(SitesFile, func(w io.Writer) error { return writeCollection(w, sites) })
	st.add(RegimesFile, func(w io.Writer) error { return writeCollection(w, regimes) })
	if len(tracks) > 0 {
		st.add(TracksFile, func(w io.Writer) error { return writeCollection(w, tracks) })
	}
	tl, sw := timelineRows(r, ss), switchRows(r)
	st.add(TimelineParquetFile, func(w io.Writer) error { return writeParquet(w, tl) })
	st.add(TimelineCSVFile, func(w io.Writer) error { return writeCSV(w, timelineColumns, tl) })
	st.add(SwitchesCSVFile, func(w io.Writer) error { return writeCSV(w, switchColumns, sw) })
	st.add(SwitchesParquetFile, func(w io.Writer) error { return writeParquet(w, sw) })
	st.add(GeoPackageFile, func(w io.Writer) error {
		layers, err := gpkgLayers(sites, regimes, tracks, tl, sw)
		if err != nil {
			return err
		}
		return writeGeoPackage(w, layers)
	})
	st.add(FeaturesFile, func(w io.Writer) error { return writeFeatures(w, r.Table) })
	st.add(ModelFile, r.Model.Write)
	st.add(RunFile, func(w io.Writer) error {
		b, err := json.MarshalIndent(r.Info, "", "  ")
		if err != nil {
			return err
		}
		_, err = w.Write(append(b, '\n'))
		return err
	})
	for _, p := range pics {
		st.add(p.File, func(w io.Writer) error { _, err := w.Write(p.PNG); return err })
	}
	written := slices.Clone(st.names) // listed by the report, with itself
	st.add(ReportFile, func(w io.Writer) error { return writeReport(w, r, ss, warnings, pics, written) })
	if err := st.commit(); err != nil {
		return err
	}
	return removeStale(dir, written)
}

// removeStale removes from dir the outputs Write can make that this run,
// which wrote the files named in written, did not: tracks.geojson and the
// pictures of an earlier run would no longer match the other files.
func removeStale(dir string, written []string) error {
	var errs []error
	removed := false
	for _, name := range append([]string{TracksFile}, picture.Files()...) {
		if slices.Contains(written, name) {
			continue
		}
		switch err := os.Remove(filepath.Join(dir, name)); {
		case err == nil:
			removed = true
		case !errors.Is(err, fs.ErrNotExist):
			errs = append(errs, fmt.Errorf("export: stale output: %w", err))
		}
	}
	if removed {
		syncDir(dir)
	}
	return errors.Join(errs...)
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
	case len(r.Entries) != len(r.Table.Windows) || len(r.Assignments) != len(r.Table.Windows):
		return fmt.Errorf("export: %d windows, %d timeline entries and %d assignments; they must match", len(r.Table.Windows), len(r.Entries), len(r.Assignments))
	}
	for i, e := range r.Entries {
		if w := r.Table.Windows[i]; e.Site != w.Site || !e.Start.Equal(w.Start) {
			return fmt.Errorf("export: timeline entry %d (%q at %s) is not window %d (%q at %s)", i, e.Site, rfc3339(e.Start), i, w.Site, rfc3339(w.Start))
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
	in := picture.Input{Model: r.Model, Assignments: r.Assignments, Entries: r.Entries, Switches: r.Switches}
	for _, s := range ss {
		in.Sites = append(in.Sites, picture.SitePoint{ID: s.id, Lon: s.lon, Lat: s.lat, Located: s.located, Regime: s.last.Regime})
	}
	return in
}
