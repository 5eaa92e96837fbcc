package kinmap

import (
	"cmp"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"slices"
	"time"

	"github.com/kinmap/kinmap/export"
	"github.com/kinmap/kinmap/history"
	"github.com/kinmap/kinmap/internal/atomicfile"
)

// Targets says where a run's files go; an empty field writes nothing
// there.
type Targets struct {
	Out     string        // output folder (export.Write)
	Model   string        // another copy of the model file
	History string        // history folder
	Wait    time.Duration // the longest wait for another run writing one of them; 0 means a minute
	// Word rewrites each warning as run.json and the report give it: the
	// library names a setting by its field, such as "(mapper.Config.Sigma0)",
	// and a command words it with its option. Nil leaves them as they are.
	Word func(string) string `json:"-"`
}

// Save writes the run's files to every target together: the output
// folder, the copy of the model and the run's windows in the history
// folder appear at once when all were written, or nothing changes. The
// folders are locked from the start of the writing to its end, and first
// cleared of what an interrupted earlier write left (the warnings say
// what); the history must not have changed since the run read it. The
// warnings of the export, such as sites without a position, join
// r.Info.Warnings first, so that run.json records them.
func (r *Result) Save(to Targets) error {
	if r.Model == nil {
		return errors.New("kinmap: the run has no model")
	}
	var model string // the copy of the model, unless it is the output folder's own
	if to.Model != "" {
		a, err1 := filepath.Abs(to.Model)
		b, err2 := filepath.Abs(filepath.Join(to.Out, export.ModelFile))
		if to.Out == "" || err1 != nil || err2 != nil || a != b {
			model = to.Model
		}
	}
	var dirs []string
	for _, d := range []string{to.Out, to.History} {
		if d != "" {
			dirs = append(dirs, d)
		}
	}
	if model != "" {
		dirs = append(dirs, filepath.Dir(model))
	}
	if len(dirs) == 0 {
		return nil
	}
	tx, err := atomicfile.Begin(dirs[0], dirs[1:], cmp.Or(to.Wait, time.Minute))
	if err != nil {
		return fmt.Errorf("kinmap: %w", err)
	}
	defer tx.Abort()
	tx.Wrap = r.wrap
	r.Info.Warnings = appendNew(r.Info.Warnings, tx.Notes()...)
	if to.History != "" {
		if err := r.stageHistory(tx, to.History); err != nil {
			return err
		}
	}
	if model != "" {
		if info, err := os.Stat(model); err == nil && info.IsDir() {
			return fmt.Errorf("kinmap: model %s is a folder", model)
		}
		if err := tx.Create(model, func(w io.Writer) error { return errors.Unwrap(r.Model.Write(w)) }); err != nil {
			return fmt.Errorf("kinmap: model: %w", err)
		}
	}
	if to.Out != "" {
		if err := r.stageOutputs(tx, to.Out, to.Word); err != nil {
			return err
		}
	}
	if err := tx.Commit(); err != nil {
		return fmt.Errorf("kinmap: %w", err)
	}
	return nil
}

// Write writes every output file of the run into dir (Save with only the
// output folder).
func (r *Result) Write(dir string) error { return r.Save(Targets{Out: dir}) }

// AppendHistory adds the run's windows to the history folder dir (Save
// with only the history folder): each replaces the window of the same site
// and start wherever the history holds one, but for a window the dump
// begins or ends inside (keepStored), every other window stays, and
// the windows of earlier dumps that the run's decoding revised are
// rewritten with it.
func (r *Result) AppendHistory(dir string) error { return r.Save(Targets{History: dir}) }

// stageHistory adds the run's windows to the history folder dir in tx.
func (r *Result) stageHistory(tx *atomicfile.Tx, dir string) error {
	h := r.history
	if h == nil || h.Dir != dir {
		// The run was decoded without this history: nothing to revise.
		var err error
		if h, err = history.Load(dir); err != nil {
			return err
		}
		r.Info.Warnings = appendNew(r.Info.Warnings, h.Notes...)
	}
	run, _ := keepStored(h, history.Windows(r.Table.Windows), r.Ingest.Start, r.Ingest.End, r.Table.Step)
	return h.Stage(tx, r.Model.LineageOrDerived(), run)
}

// windowKey names a window by its site and start, to the microsecond the
// history keeps.
type windowKey struct {
	site  string
	start int64
}

func keyOf(site string, start time.Time) windowKey { return windowKey{site, start.UnixMicro()} }

// keepStored returns the windows of run to write into the history h, less
// those that the dump, which read from first to last, cuts (a window that
// starts before its first reading or ends after its last, by more than a
// sampling step) and whose site and start h holds already, and how many it
// left out. Such a window holds only part of its span: an overlapping
// dump cut at 08:00 would otherwise replace the day an earlier dump held
// whole with its last 16 hours.
func keepStored(h *history.History, run []history.Window, first, last time.Time, step time.Duration) ([]history.Window, int) {
	cut := map[windowKey]bool{}
	if first.IsZero() || last.IsZero() {
		return run, 0 // a dump's span unknown
	}
	for _, w := range run {
		if first.Sub(w.Start) > step || w.End.Sub(last) > step {
			cut[keyOf(w.Site, w.Start)] = false
		}
	}
	if len(cut) == 0 {
		return run, 0
	}
	for _, w := range h.Windows {
		if _, ok := cut[keyOf(w.Site, w.Start)]; ok {
			cut[keyOf(w.Site, w.Start)] = true
		}
	}
	out := make([]history.Window, 0, len(run))
	for _, w := range run {
		if !cut[keyOf(w.Site, w.Start)] {
			out = append(out, w)
		}
	}
	return out, len(run) - len(out)
}

// stageOutputs adds the output folder dir to tx, its warnings worded by
// word (Targets.Word).
func (r *Result) stageOutputs(tx *atomicfile.Tx, dir string, word func(string) string) error {
	run := &export.Run{
		Model:      r.Model,
		Table:      r.Table,
		Switches:   r.Switches,
		Shared:     r.Shared,
		Register:   r.Register,
		Summary:    &r.Ingest,
		Changes:    r.Changes,
		Daily:      r.dailySummaries(),
		Title:      "kinmap " + cmp.Or(r.Info.Command, "run"),
		Conditions: r.exportConditions(r.showNotes),
		Attention:  r.Attention,
		Health:     r.Health,
		Against:    r.Against,
		Levels:     r.Levels,
		WorkList:   r.workList,
	}
	ws, err := export.Warnings(run)
	if err != nil {
		return err
	}
	r.Info.Warnings = appendNew(r.Info.Warnings, ws...)
	// The report shows each warning once, those it finds itself included.
	info := r.Info
	if word != nil {
		info.Warnings = make([]string, len(r.Info.Warnings))
		for i, w := range r.Info.Warnings {
			info.Warnings[i] = word(w)
		}
		if c := r.Info.Regimes; c != nil {
			worded := *c
			worded.Note = word(c.Note)
			info.Regimes = &worded
		}
	}
	run.Warnings, run.Info = info.Warnings, info
	switch c := r.Model.Choice; {
	case info.Regimes != nil:
		run.RegimeNote = info.Regimes.Note
	case c != nil:
		// assign: the model's choice, with its phases, and no option
		// to re-run.
		run.RegimeNote = choiceNote(c, r.Model.PhaseNotes())
	}
	return export.Stage(tx, dir, run)
}

// appendNew appends to list the items of more it lacks.
func appendNew(list []string, more ...string) []string {
	for _, m := range more {
		if !slices.Contains(list, m) {
			list = append(list, m)
		}
	}
	return list
}
