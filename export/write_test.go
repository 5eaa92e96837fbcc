package export

import (
	"errors"
	"fmt"
	"io"
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
		SwitchesCSVFile, SwitchesParquetFile, FeaturesFile, ModelFile, RunFile, ReportFile} {
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
	if got := files[RunFile]; got != "{\n  \"command\": \"kinmap train\",\n  \"windows\": 18\n}\n" {
		t.Errorf("run.json:\n%s", got)
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

// An injected writer error in the middle of a stage: the files staged
// before it are not renamed into place and no temporary file remains.
func TestStageWriterError(t *testing.T) {
	dir := t.TempDir()
	if err := os.WriteFile(filepath.Join(dir, "a.txt"), []byte("old a"), 0o644); err != nil {
		t.Fatal(err)
	}
	st, err := newStage(dir)
	if err != nil {
		t.Fatal(err)
	}
	boom := errors.New("disk full")
	calls := 0
	for _, name := range []string{"a.txt", "b.txt", "c.txt", "d.txt"} {
		st.add(name, func(w io.Writer) error {
			calls++
			if name == "c.txt" {
				io.WriteString(w, "half")
				return boom
			}
			_, err := io.WriteString(w, "new "+name)
			return err
		})
	}
	err = st.commit()
	if !errors.Is(err, boom) || !strings.Contains(err.Error(), "c.txt") {
		t.Errorf("error %v, want the writer's error for c.txt", err)
	}
	if calls != 3 {
		t.Errorf("%d writers called, want 3: none after the failure", calls)
	}
	if got := snapshot(t, dir); !maps.Equal(got, map[string]string{"a.txt": "old a"}) {
		t.Errorf("folder holds %v, want only the old a.txt", got)
	}
}

func TestStageNames(t *testing.T) {
	for _, name := range []string{"../x", "sub/x", "", ".", "..", "dup"} {
		t.Run(fmt.Sprintf("%q", name), func(t *testing.T) {
			dir := t.TempDir()
			st, err := newStage(dir)
			if err != nil {
				t.Fatal(err)
			}
			ok := func(w io.Writer) error { return nil }
			if name == "dup" {
				st.add(name, ok)
			}
			st.add(name, ok)
			if err := st.commit(); err == nil {
				t.Errorf("name %q accepted", name)
			}
			if got := snapshot(t, dir); len(got) != 0 {
				t.Errorf("folder holds %v", slices.Sorted(maps.Keys(got)))
			}
		})
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
	short := fixtureRun()
	short.Entries = short.Entries[1:]
	swapped := fixtureRun()
	swapped.Entries[0], swapped.Entries[1] = swapped.Entries[1], swapped.Entries[0]
	for _, tc := range []struct {
		name string
		r    *Run
		want string
	}{
		{"nil", nil, "needs a model"},
		{"no model", &Run{Table: fixtureRun().Table}, "needs a model"},
		{"short", short, "must match"},
		{"misaligned", swapped, "timeline entry 0"},
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
// in one warning that says how to give them positions.
func TestPositionWarnings(t *testing.T) {
	if w := positionWarnings([]string{"A", "B"}); len(w) != 2 || !strings.Contains(w[1], `site "B" has no position`) {
		t.Errorf("two sites: %q", w)
	}
	w := positionWarnings([]string{"A", "B", "C", "D", "E"})
	if len(w) != 1 || !strings.HasPrefix(w[0], `5 sites have no position ("A", "B", "C" and 2 more)`) || !strings.Contains(w[0], "--sites") {
		t.Errorf("five sites: %q", w)
	}
}
