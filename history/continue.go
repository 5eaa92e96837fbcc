package history

import (
	"fmt"
	"maps"
	"path/filepath"
	"slices"
	"strings"
	"time"

	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/model"
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

// Continue returns where the history leaves the sites of the windows ws,
// to decode with m, whose regime numbers belong to lineage. Only the
// windows that end by a site's first window in ws count, so running a dump
// again does not feed on its own earlier result, and only windows of
// lineage: the regime numbers of another map mean other regimes, and the
// sites last seen under one are warned about.
func (h *History) Continue(m *model.Model, lineage string, ws []features.Window) *Continuation {
	c := &Continuation{h: h, Priors: map[string]timeline.Prior{}, before: map[string]int{}}
	first := map[string]time.Time{}
	for _, w := range ws {
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
func unitOf(m *model.Model, w *Window) int {
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

// Prepend returns the windows to decode: the tail windows, with their
// units, quantization errors and scaled vectors as the history recorded
// them, then copies of the run's windows ws.
func (c *Continuation) Prepend(m *model.Model, ws []features.Window) []features.Window {
	out := make([]features.Window, 0, len(c.tail)+len(ws))
	for _, r := range c.tail {
		w := &c.h.Windows[r]
		out = append(out, features.Window{Site: w.Site, Start: w.Start, End: w.End, Scaled: w.Scaled, Unit: unitOf(m, w), QE: w.QE})
	}
	return append(out, ws...)
}

// Settle splits the decoded windows that Prepend returned. It returns the
// run's windows and the switches, less those at tail windows that the
// history already records (a switch whose window a later dump revised is
// reported again: this run supersedes that one). The tail windows whose
// regime changed are changed in the history and marked revised, to be
// written with the run (Stage); revised counts them.
func (c *Continuation) Settle(ws []features.Window, switches []timeline.Switch) (run []features.Window, sw []timeline.Switch, revised int) {
	k := len(c.tail)
	if k == 0 {
		return ws, switches, 0
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
		if w := &h.Windows[r]; w.Regime != ws[i].Regime {
			w.Regime, w.Revised = ws[i].Regime, true
			if h.dirty == nil {
				h.dirty = map[int]bool{}
			}
			h.dirty[h.fileOf[r]] = true
			revised++
		}
	}
	return ws[k:], switches, revised
}

// Windows returns the history windows of a run's decoded windows.
func Windows(ws []features.Window) []Window {
	out := make([]Window, len(ws))
	for i, w := range ws {
		out[i] = Window{Site: w.Site, Start: w.Start, End: w.End, Unit: w.Unit, Regime: w.Regime, QE: w.QE, Unfamiliar: w.Unfamiliar, Scaled: w.Scaled}
	}
	return out
}
