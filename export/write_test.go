package export

import (
	"encoding/json"
	"errors"
	"io/fs"
	"maps"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"
)

// snapshot reads every file of dir.
func snapshot(t *testing.T, dir string) map[string]string {
	t.Helper()
	entries, err := os.ReadDir(dir)
	if err != nil {
		t.Fatal(err)
	}
	out := map[string]string{}
	for _, e := range entries {
		out[e.Name()] = string(read(t, dir, e.Name()))
	}
	return out
}

func TestWriteFiles(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "new", "nested") // created by Write
	if err := Write(dir, fixtureRun()); err != nil {
		t.Fatal(err)
	}
	files := snapshot(t, dir)
	for _, name := range []string{SitesFile, RegimesFile, TracksFile, TimelineParquetFile, TimelineCSVFile,
		SwitchesCSVFile, SwitchesParquetFile, SharedCSVFile, SharedParquetFile, FeaturesFile, ModelFile, RunFile, ReportFile} {
		if len(files[name]) == 0 {
			t.Errorf("%s missing or empty", name)
		}
	}
	for name := range files {
		if strings.HasPrefix(name, ".") {
			t.Errorf("temporary file %s left behind", name)
		}
		if info, err := os.Stat(filepath.Join(dir, name)); err != nil || info.Mode().Perm()&0o044 != 0o044 {
			t.Errorf("%s is not readable by others: %v", name, info.Mode())
		}
	}
	var info struct {
		Command string
		Windows int
		Files   []string
	}
	if err := json.Unmarshal([]byte(files[RunFile]), &info); err != nil || info.Command != "kinmap train" || info.Windows != 18 {
		t.Errorf("run.json (%v):\n%s", err, files[RunFile])
	}
	// run.json lists exactly the files of the folder, itself included.
	if got, want := slices.Sorted(slices.Values(info.Files)), slices.Sorted(maps.Keys(files)); !slices.Equal(got, want) {
		t.Errorf("run.json lists %v; the folder holds %v", got, want)
	}
}

// A run that fails part-way leaves the folder exactly as the earlier run
// left it: no half-written file, no temporary file, nothing replaced.
func TestFailedWriteKeepsEarlierRun(t *testing.T) {
	dir := t.TempDir()
	if err := Write(dir, fixtureRun()); err != nil {
		t.Fatal(err)
	}
	before := snapshot(t, dir)

	r := fixtureRun()
	r.Title = "second run"
	r.Switches = nil        // changes switches.csv, staged before run.json
	r.Info = make(chan int) // run.json cannot be written
	err := Write(dir, r)
	if err == nil || !strings.HasPrefix(err.Error(), "export: ") || !strings.Contains(err.Error(), RunFile) {
		t.Fatalf("error %v, want one about %s", err, RunFile)
	}
	after := snapshot(t, dir)
	if !maps.Equal(before, after) {
		t.Errorf("files changed by a failed run: before %v, after %v", slices.Sorted(maps.Keys(before)), slices.Sorted(maps.Keys(after)))
	}
}

// A run that does not make an optional output removes the one an earlier
// run made, which would no longer match the other files: it leaves the
// folder as a fresh run into an empty folder would, apart from files that
// are not outputs.
func TestStaleOutputsRemoved(t *testing.T) {
	for _, tc := range []struct {
		name   string
		change func(*Run)
		gone   []string
	}{
		{"no mobile site", func(r *Run) {
			for i := range r.Table.Windows {
				r.Table.Windows[i].Located = r.Table.Windows[i].Site != "T-7"
			}
		}, []string{TracksFile}},
		{"no located site and no switch", func(r *Run) {
			r.Register = nil
			r.Switches = nil
			for i := range r.Table.Windows {
				r.Table.Windows[i].Located = false
			}
		}, []string{TracksFile, "sites.png", "timelines.png"}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			dir := t.TempDir()
			if err := os.WriteFile(filepath.Join(dir, "notes.txt"), []byte("kept"), 0o644); err != nil {
				t.Fatal(err)
			}
			if err := Write(dir, fixtureRun()); err != nil {
				t.Fatal(err)
			}
			for _, name := range tc.gone {
				if _, err := os.Stat(filepath.Join(dir, name)); err != nil {
					t.Fatalf("the first run did not write %s: %v", name, err)
				}
			}
			r := fixtureRun()
			tc.change(r)
			if err := Write(dir, r); err != nil {
				t.Fatal(err)
			}
			fresh := t.TempDir()
			if err := Write(fresh, r); err != nil {
				t.Fatal(err)
			}
			want := append(slices.Sorted(maps.Keys(snapshot(t, fresh))), "notes.txt")
			slices.Sort(want)
			if got := slices.Sorted(maps.Keys(snapshot(t, dir))); !slices.Equal(got, want) {
				t.Errorf("folder holds %v, want %v", got, want)
			}
			for _, name := range tc.gone {
				if _, err := os.Stat(filepath.Join(dir, name)); !errors.Is(err, fs.ErrNotExist) {
					t.Errorf("%s still there: %v", name, err)
				}
			}
		})
	}
}

func TestCheck(t *testing.T) {
	offMap := fixtureRun()
	offMap.Table.Windows[1].Unit = offMap.Model.Map.Units()
	for _, tc := range []struct {
		name string
		r    *Run
		want string
	}{
		{"nil", nil, "needs a model"},
		{"no model", &Run{Table: fixtureRun().Table}, "needs a model"},
		{"off the map", offMap, `site "PS-01", window 2025-03-02T00:00:00Z: unit 16 outside the map's 16 units`},
	} {
		t.Run(tc.name, func(t *testing.T) {
			dir := t.TempDir()
			err := Write(dir, tc.r)
			if err == nil || !strings.Contains(err.Error(), tc.want) {
				t.Errorf("error %v, want one mentioning %q", err, tc.want)
			}
			if got := snapshot(t, dir); len(got) != 0 {
				t.Errorf("files written: %v", slices.Sorted(maps.Keys(got)))
			}
		})
	}
}

func TestWarnings(t *testing.T) {
	r := fixtureRun()
	r.Register.Sites[1].Lat = 95 // outside WGS 84 ranges
	w, err := Warnings(r)
	if err != nil {
		t.Fatal(err)
	}
	want := []string{
		`site "PS-02": registered position (lat 95, lon 151.2093) is outside WGS 84 ranges; ignored`,
		`site "X-9" has no position; its feature in sites.geojson has no geometry`,
	}
	if !slices.Equal(w, want) {
		t.Errorf("warnings %q, want %q", w, want)
	}
}

// A few sites without a position are named one by one; many are summed up
// in one warning that names the setting that gives them positions, by its
// field (the command words it with its option).
func TestPositionWarnings(t *testing.T) {
	if w := positionWarnings([]string{"A", "B"}); len(w) != 2 || !strings.Contains(w[1], `site "B" has no position`) {
		t.Errorf("two sites: %q", w)
	}
	w := positionWarnings([]string{"A", "B", "C", "D", "E"})
	if len(w) != 1 || !strings.HasPrefix(w[0], `5 sites have no position ("A", "B", "C" and 2 more)`) || !strings.Contains(w[0], "(export.Run.Register)") {
		t.Errorf("five sites: %q", w)
	}
}

// A user's own files under kinmap's output names, in a folder without a
// run.json listing them, are neither replaced nor removed: the write is
// refused and the folder stays as it was. A folder of a kinmap run from
// before run.json listed its files is taken as kinmap's.
func TestForeignFilesKept(t *testing.T) {
	for _, name := range []string{SitesFile, TracksFile, "sites.png"} {
		dir := t.TempDir()
		if err := os.WriteFile(filepath.Join(dir, name), []byte("the user's own"), 0o644); err != nil {
			t.Fatal(err)
		}
		before := snapshot(t, dir)
		err := Write(dir, fixtureRun())
		var ff *ForeignFilesError
		if !errors.As(err, &ff) || !slices.Equal(ff.Files, []string{name}) {
			t.Errorf("%s: error %v, want one naming %s", name, err, name)
		}
		if after := snapshot(t, dir); !maps.Equal(before, after) {
			t.Errorf("%s: the folder changed: %v", name, slices.Sorted(maps.Keys(after)))
		}
	}

	// An earlier run's folder whose run.json has no list of files.
	dir := t.TempDir()
	if err := Write(dir, fixtureRun()); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(dir, RunFile), []byte(`{"tool": "kinmap", "version": "0.1.0"}`), 0o644); err != nil {
		t.Fatal(err)
	}
	r := fixtureRun()
	r.Switches = nil
	if err := Write(dir, r); err != nil {
		t.Errorf("a folder of an earlier kinmap: %v", err)
	}
	if _, err := os.Stat(filepath.Join(dir, "timelines.png")); !errors.Is(err, fs.ErrNotExist) {
		t.Errorf("the earlier run's timelines.png, which this run does not make, is still there (%v)", err)
	}
}
