package history

import (
	"fmt"
	"maps"
	"path/filepath"
	"slices"
	"strings"
	"time"

	"gonum.org/v1/gonum/mat"

	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/mapper"
	"github.com/kinmap/kinmap/timeline"
)

// Continuation is where the history leaves the sites of a run. Decoding a
// dump alone cannot see the windows that follow it: a change in its last
// MinDwell-1 windows, or one whose evidence was too weak on its own, waits
// for windows that only a later dump has. So each site's tail, the windows
// of its last segment in the file of its latest window, is decoded again
// together with the run's windows, continuing from the state before the
// tail.
type Continuation struct {
	Priors   map[string]timeline.Prior // state before the tail, by site
	Warnings []string

	h      *History
	before map[string]int // the window the prior comes from, by site
	tail   []int          // windows of h, by site, then time
}

// Continue returns where the history leaves the sites of the windows of
// t, to decode with m, whose regime numbers belong to lineage. Only the
// windows that end by a site's first window in t count, so running a dump
// again does not feed on its own earlier result, and only windows of
// lineage: the regime numbers of another map mean other regimes, and the
// sites last seen under one are warned about.
func (h *History) Continue(m *mapper.Model, lineage string, t *features.Table) *Continuation {
	c := &Continuation{h: h, Priors: map[string]timeline.Prior{}, before: map[string]int{}}
	first := map[string]time.Time{}
	for _, w := range t.Windows {
		if f, ok := first[w.Site]; !ok || w.Start.Before(f) {
			first[w.Site] = w.Start
		}
	}
	bySite := map[string][]int{} // sorted by start, as h.Windows is
	latest := map[string]int{}   // over every lineage, for the warning
	for i := range h.Windows {
		w := &h.Windows[i]
		if f, ok := first[w.Site]; !ok || w.End.After(f) {
			continue
		}
		latest[w.Site] = i
		if w.Lineage == lineage {
			bySite[w.Site] = append(bySite[w.Site], i)
		}
	}
	foreign := map[string]bool{}
	sites := 0
	for _, i := range latest {
		if w := &h.Windows[i]; w.Lineage != lineage {
			foreign[filepath.Dir(h.files[h.fileOf[i]])] = true
			sites++
		}
	}
	if sites > 0 {
		c.Warnings = append(c.Warnings, fmt.Sprintf("history %s: %d sites were last seen in %s, numbered by another map than this model and its updates (or by a kinmap that did not record which): a switch across that boundary cannot be decoded",
			h.Dir, sites, strings.Join(slices.Sorted(maps.Keys(foreign)), ", ")))
	}
	dim := m.Map.Dim
	for _, site := range slices.Sorted(maps.Keys(bySite)) {
		refs := bySite[site]
		last := &h.Windows[refs[len(refs)-1]]
		lastFile := h.fileOf[refs[len(refs)-1]]
		i := len(refs) - 1
		for ; i >= 0; i-- {
			w := &h.Windows[refs[i]]
			if h.fileOf[refs[i]] != lastFile || w.Regime != last.Regime || len(w.Scaled) != dim || unitOf(m, w) < 0 {
				break
			}
		}
		c.tail = append(c.tail, refs[i+1:]...)
		if i < 0 {
			continue
		}
		regime, n := h.Windows[refs[i]].Regime, 0
		for j := i; j >= 0 && h.Windows[refs[j]].Regime == regime; j-- {
			n++
		}
		c.Priors[site] = timeline.Prior{Regime: regime, Windows: n}
		c.before[site] = refs[i]
	}
	return c
}

// unitOf returns the unit of w on m's lattice, from its cell for a window
// written before units were recorded; -1 when unknown.
func unitOf(m *mapper.Model, w *Window) int {
	if w.Unit >= 0 {
		return w.Unit
	}
	if col, row, ok := w.Cell(); ok {
		return m.Map.Lattice.Unit(col, row)
	}
	return -1
}

// Tail returns the number of windows of the history decoded again.
func (c *Continuation) Tail() int { return len(c.tail) }

// Prepend returns the inputs of the decoding with the tail windows before
// the run's: their units and quantization errors as recorded, their scaled
// vectors from the history.
func (c *Continuation) Prepend(m *mapper.Model, t *features.Table, x *mat.Dense, asg []mapper.Assignment) (*features.Table, *mat.Dense, []mapper.Assignment) {
	k := len(c.tail)
	if k == 0 {
		return t, x, asg
	}
	n, dim := x.Dims()
	tt := &features.Table{Names: t.Names, Config: t.Config, Windows: make([]features.Window, 0, k+n)}
	xx := mat.NewDense(k+n, dim, nil)
	aa := make([]mapper.Assignment, 0, k+n)
	for i, r := range c.tail {
		w := &c.h.Windows[r]
		tt.Windows = append(tt.Windows, features.Window{Site: w.Site, Start: w.Start, End: w.End})
		xx.SetRow(i, w.Scaled)
		aa = append(aa, mapper.Assignment{BMU: unitOf(m, w), QE: w.QE})
	}
	tt.Windows = append(tt.Windows, t.Windows...)
	xx.Slice(k, k+n, 0, dim).(*mat.Dense).Copy(x)
	return tt, xx, append(aa, asg...)
}

// Settle splits the decoding made from Prepend's inputs. It returns the
// run's entries and the switches, less those at tail windows that the
// history already records (a switch whose window a later dump revised is
// reported again: this run supersedes that one). The tail windows whose
// regime changed are changed in the history and marked revised, to be
// written with the run (Stage); revised counts them.
func (c *Continuation) Settle(entries []timeline.Entry, switches []timeline.Switch) (run []timeline.Entry, sw []timeline.Switch, revised int) {
	k := len(c.tail)
	if k == 0 {
		return entries, switches, 0
	}
	h := c.h
	inTail := make(map[key]int, k)
	for i, r := range c.tail {
		inTail[keyOf(&h.Windows[r])] = i
	}
	recorded := func(s timeline.Switch) bool {
		i, ok := inTail[key{s.Site, micro(s.Time).UnixMicro()}]
		if !ok {
			return false
		}
		w, prev := &h.Windows[c.tail[i]], (*Window)(nil)
		if i > 0 && h.Windows[c.tail[i-1]].Site == s.Site {
			prev = &h.Windows[c.tail[i-1]]
		} else if r, ok := c.before[s.Site]; ok {
			prev = &h.Windows[r]
		}
		return prev != nil && prev.Regime == s.From && w.Regime == s.To && !prev.Revised && !w.Revised
	}
	switches = slices.DeleteFunc(switches, recorded)
	for i, r := range c.tail {
		if w := &h.Windows[r]; w.Regime != entries[i].Regime {
			w.Regime, w.Revised = entries[i].Regime, true
			if h.dirty == nil {
				h.dirty = map[int]bool{}
			}
			h.dirty[h.fileOf[r]] = true
			revised++
		}
	}
	return entries[k:], switches, revised
}

// Windows returns the history windows of a run's timeline entries, with
// the scaled feature vectors of x (one row per entry; nil for none).
func Windows(entries []timeline.Entry, x *mat.Dense) ([]Window, error) {
	if x != nil {
		if n, _ := x.Dims(); n != len(entries) {
			return nil, fmt.Errorf("history: %d scaled rows for %d windows", n, len(entries))
		}
	}
	ws := make([]Window, len(entries))
	for i, e := range entries {
		ws[i] = Window{Site: e.Site, Start: e.Start, End: e.End, Unit: e.BMU, Regime: e.Regime, QE: e.QE, Unfamiliar: e.Unfamiliar}
		if x != nil {
			ws[i].Scaled = x.RawRowView(i)
		}
	}
	return ws, nil
}
