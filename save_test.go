package kinmap_test

import (
	"encoding/csv"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"maps"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strings"
	"sync"
	"sync/atomic"
	"syscall"
	"testing"
	"time"

	"github.com/kinmap/kinmap"
	"github.com/kinmap/kinmap/export"
	"github.com/kinmap/kinmap/history"
	"github.com/kinmap/kinmap/internal/atomicfile"
	"github.com/kinmap/kinmap/internal/faultwriter"
	"github.com/kinmap/kinmap/model"
)

// saveFixture is a trained first week, saved to every target, and a
// second week's dump.
type saveFixture struct {
	dir, week1, week2 string
	to                kinmap.Targets
	first             *kinmap.Result
}

func newSaveFixture(t *testing.T) *saveFixture {
	t.Helper()
	fleet := fleetT(t, 12, 2)
	dir := t.TempDir()
	f := &saveFixture{dir: dir, week1: filepath.Join(dir, "week1.csv"), week2: filepath.Join(dir, "week2.csv")}
	mid := fleet.WindowStart(fleet.Windows() / 2)
	writeDump(t, f.week1, fleet, fleet.WindowStart(0), mid, 0, 0, 1)
	writeDump(t, f.week2, fleet, mid, fleet.WindowStart(fleet.Windows()), 0, 0, 1)
	f.to = kinmap.Targets{Out: filepath.Join(dir, "out"), Model: filepath.Join(dir, "models", "fleet.model"), History: filepath.Join(dir, "history")}
	var err error
	if f.first, err = kinmap.Train(f.options(f.week1)); err != nil {
		t.Fatal(err)
	}
	if err := f.first.Save(f.to); err != nil {
		t.Fatal(err)
	}
	return f
}

func (f *saveFixture) options(data string) kinmap.Options {
	o := options(data)
	o.History = f.to.History
	return o
}

// files reads every file below the targets' folders.
func (f *saveFixture) files(t *testing.T) map[string]string {
	t.Helper()
	out := map[string]string{}
	for _, d := range []string{f.to.Out, filepath.Dir(f.to.Model), f.to.History} {
		err := filepath.WalkDir(d, func(p string, e fs.DirEntry, err error) error {
			if err != nil || e.IsDir() {
				return err
			}
			b, err := os.ReadFile(p)
			out[p] = string(b)
			return err
		})
		if err != nil && !errors.Is(err, fs.ErrNotExist) {
			t.Fatal(err)
		}
	}
	return out
}

// A Save whose writing fails after N bytes at any one of its files, in
// turn, leaves the output folder, the model copy and the history byte for
// byte as the earlier run left them, and its error names the file the
// user knows; once nothing fails, the run is complete everywhere.
func TestSaveAllOrNothing(t *testing.T) {
	if testing.Short() {
		t.Skip("saves a run some forty times")
	}
	f := newSaveFixture(t)
	before := f.files(t)
	second, err := kinmap.Assign(f.options(f.week2), f.first.Model)
	if err != nil {
		t.Fatal(err)
	}
	var paths []string
	for k := 0; ; k++ {
		failed := false
		for _, n := range []int{0, 1} { // every file is longer
			var count atomic.Int32
			var at string
			kinmap.SetWrap(second, func(path string, w io.Writer) io.Writer {
				if int(count.Add(1))-1 == k {
					at = path
					return &faultwriter.Writer{W: w, N: n}
				}
				return w
			})
			err := second.Save(f.to)
			if err == nil {
				break
			}
			failed = true
			if !errors.Is(err, faultwriter.ErrFull) || !strings.Contains(err.Error(), at) || strings.Contains(err.Error(), ".kinmap-") {
				t.Errorf("failing %s after %d bytes: error %v; want the injected one, naming that file only", at, n, err)
			}
			if after := f.files(t); !maps.Equal(before, after) {
				t.Fatalf("failing %s after %d bytes changed the files: %s", at, n, diffKeys(before, after))
			}
			if n == 0 {
				paths = append(paths, at)
			}
		}
		if !failed {
			break
		}
	}
	// Every kind of file was made to fail.
	for _, want := range []string{filepath.Join(f.to.Out, export.RunFile), f.to.Model, "kinmap-history.json", ".parquet"} {
		if !slices.ContainsFunc(paths, func(p string) bool { return strings.HasSuffix(p, want) && strings.HasPrefix(p, f.dir) }) {
			t.Errorf("no failure injected at %s among %d files", want, len(paths))
		}
	}
	// Complete: the outputs are the second run's, the model written, the
	// history holds both weeks once.
	var info kinmap.RunInfo
	b, _ := os.ReadFile(filepath.Join(f.to.Out, export.RunFile))
	if err := json.Unmarshal(b, &info); err != nil || len(info.Inputs) != 1 || info.Inputs[0].Path != f.week2 {
		t.Errorf("run.json inputs %+v (%v), want the second week", info.Inputs, err)
	}
	if _, err := model.ReadFile(f.to.Model); err != nil {
		t.Error(err)
	}
	h, err := history.Read(f.to.History)
	if err != nil {
		t.Fatal(err)
	}
	if n := len(f.first.Table.Windows) + len(second.Table.Windows); len(h.Windows) != n {
		t.Errorf("history holds %d windows, want %d", len(h.Windows), n)
	}
	t.Logf("%d files failed in turn", len(paths))
}

func diffKeys(a, b map[string]string) string {
	var d []string
	for k, v := range a {
		if w, ok := b[k]; !ok || w != v {
			d = append(d, "-"+k)
		}
	}
	for k := range b {
		if _, ok := a[k]; !ok {
			d = append(d, "+"+k)
		}
	}
	slices.Sort(d)
	return strings.Join(d, " ")
}

// Two runs decoded from one history and saved at once: the lock lets one
// commit at a time, and the one whose history changed under it is refused
// before it writes anything, its output folder included.
func TestSaveConcurrentRuns(t *testing.T) {
	f := newSaveFixture(t)
	var rs [2]*kinmap.Result
	for i := range rs {
		var err error
		if rs[i], err = kinmap.Assign(f.options(f.week2), f.first.Model); err != nil {
			t.Fatal(err)
		}
	}
	var errs [2]error
	var wg sync.WaitGroup
	for i, r := range rs {
		wg.Go(func() {
			errs[i] = r.Save(kinmap.Targets{Out: filepath.Join(f.dir, fmt.Sprint("out", i)), History: f.to.History})
		})
	}
	wg.Wait()
	var changed *history.ChangedError
	won := slices.IndexFunc(errs[:], func(err error) bool { return err == nil })
	if won < 0 || !errors.As(errs[1-won], &changed) {
		t.Fatalf("errors %v; want one run saved and the other refused as changed", errs)
	}
	if _, err := os.Stat(filepath.Join(f.dir, fmt.Sprint("out", 1-won))); !errors.Is(err, fs.ErrNotExist) {
		t.Errorf("the refused run left its output folder (%v)", err)
	}
	h, err := history.Read(f.to.History)
	if err != nil {
		t.Fatal(err)
	}
	if n := len(f.first.Table.Windows) + len(rs[won].Table.Windows); len(h.Windows) != n {
		t.Errorf("history holds %d windows, want %d", len(h.Windows), n)
	}
}

// TestMain runs the child of TestSaveKilled when asked: it maps the two
// weeks in turn and saves each, for ever.
func TestMain(m *testing.M) {
	if os.Getenv("KINMAP_SAVE_CHILD") == "" {
		os.Exit(m.Run())
	}
	var to kinmap.Targets
	json.Unmarshal([]byte(os.Getenv("KINMAP_SAVE_CHILD")), &to)
	model, err := model.ReadFile(to.Model)
	if err != nil {
		fmt.Fprintln(os.Stderr, err)
		os.Exit(3)
	}
	dumps := strings.Split(os.Getenv("KINMAP_SAVE_DUMPS"), ",")
	for i := 0; ; i++ {
		o := options(dumps[i%2])
		o.History = to.History
		r, err := kinmap.Assign(o, model)
		if err == nil {
			err = r.Save(to)
		}
		if err != nil {
			fmt.Fprintln(os.Stderr, err)
			os.Exit(3)
		}
		if i == 0 {
			fmt.Println("saved")
		}
	}
}

// A run killed (SIGKILL) at random points of its Save leaves, once the
// next run has recovered, an output folder wholly of one run (every file
// run.json lists, and only those, with windows of the dump it names), a
// model that reads, a history that holds each week's windows once, and no
// temporary file. Seed 2 picks the delays.
func TestSaveKilled(t *testing.T) {
	if testing.Short() {
		t.Skip("kills child processes")
	}
	f := newSaveFixture(t)
	env, _ := json.Marshal(f.to)
	exe, err := os.Executable()
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(2, 0))
	recovered := 0
	for round := range 8 {
		c := exec.Command(exe, "-test.run=^$")
		c.Env = append(os.Environ(), "KINMAP_SAVE_CHILD="+string(env), "KINMAP_SAVE_DUMPS="+f.week2+","+f.week1)
		out, err := c.StdoutPipe()
		if err != nil {
			t.Fatal(err)
		}
		var stderr strings.Builder
		c.Stderr = &stderr
		if err := c.Start(); err != nil {
			t.Fatal(err)
		}
		io.ReadFull(out, make([]byte, len("saved\n")))
		time.Sleep(time.Duration(rng.IntN(1500)) * time.Millisecond)
		c.Process.Signal(syscall.SIGKILL)
		c.Wait()
		if ws, ok := c.ProcessState.Sys().(syscall.WaitStatus); !ok || !ws.Signaled() {
			t.Fatalf("round %d: the child ended by itself: %s", round, stderr.String())
		}
		tx, err := atomicfile.Begin(f.to.Out, []string{filepath.Dir(f.to.Model), f.to.History}, time.Minute)
		if err != nil {
			t.Fatal(err)
		}
		if len(tx.Notes()) > 0 {
			recovered++
		}
		tx.Abort()
		checkWhole(t, f, round)
	}
	t.Logf("%d of 8 kills left something to recover", recovered)
}

// checkWhole checks that the targets of f hold whole runs.
func checkWhole(t *testing.T, f *saveFixture, round int) {
	t.Helper()
	for p := range f.files(t) {
		if strings.HasPrefix(filepath.Base(p), ".kinmap-") {
			t.Errorf("round %d: %s left behind", round, p)
		}
	}
	var info struct {
		Inputs []struct{ Path string }
		Files  []string
	}
	b, err := os.ReadFile(filepath.Join(f.to.Out, export.RunFile))
	if err := errors.Join(err, json.Unmarshal(b, &info)); err != nil || len(info.Inputs) != 1 {
		t.Fatalf("round %d: run.json: %v", round, err)
	}
	items, _ := os.ReadDir(f.to.Out)
	var names []string
	for _, it := range items {
		names = append(names, it.Name())
	}
	if slices.Sort(info.Files); !slices.Equal(names, info.Files) {
		t.Errorf("round %d: the folder holds %v, run.json lists %v", round, names, info.Files)
	}
	// The timeline's windows are those of the dump run.json names.
	dump, err := os.ReadFile(info.Inputs[0].Path)
	if err != nil {
		t.Fatal(err)
	}
	first := strings.Split(strings.Split(string(dump), "\n")[1], ",")[1][:10]
	tl, err := os.Open(filepath.Join(f.to.Out, export.TimelineCSVFile))
	if err != nil {
		t.Fatal(err)
	}
	rows, err := csv.NewReader(tl).ReadAll()
	tl.Close()
	if err != nil || len(rows) < 2 {
		t.Fatalf("round %d: timeline.csv: %v", round, err)
	}
	earliest := rows[1][1]
	for _, r := range rows[1:] {
		earliest = min(earliest, r[1])
	}
	if earliest[:10] != first {
		t.Errorf("round %d: the timeline starts %s, the dump run.json names %s", round, earliest[:10], first)
	}
	if _, err := model.ReadFile(f.to.Model); err != nil {
		t.Errorf("round %d: %v", round, err)
	}
	h, err := history.Read(f.to.History)
	if err != nil {
		t.Fatalf("round %d: %v", round, err)
	}
	seen := map[string]bool{}
	for _, w := range h.Windows {
		k := w.Site + w.Start.String()
		if seen[k] {
			t.Errorf("round %d: window %s twice", round, k)
		}
		seen[k] = true
	}
	if len(h.Windows) < len(f.first.Table.Windows) {
		t.Errorf("round %d: history holds %d windows, fewer than the first week's %d", round, len(h.Windows), len(f.first.Table.Windows))
	}
}
