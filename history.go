package kinmap

import (
	"crypto/sha256"
	"encoding/binary"
	"encoding/hex"
	"fmt"
	"maps"
	"slices"
	"strings"
	"time"

	"gonum.org/v1/gonum/mat"

	"github.com/kinmap/kinmap/export"
	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/mapper"
	"github.com/kinmap/kinmap/timeline"
)

// AppendHistory adds the run's timeline to the history folder dir as the
// period of its earliest window (dir/period=YYYY-MM-DD/timeline.parquet),
// with the lineage of the run's model and each window's scaled feature
// vector (from r.X, when set), so that a later run of the same lineage can
// decode the end of this period again together with its own windows. The
// windows the run holds leave every other period, so running a dump again
// replaces them. The earlier periods whose last windows the run's decoding
// revised are rewritten first.
func (r *Result) AppendHistory(dir string) error {
	if r.Model == nil {
		return fmt.Errorf("kinmap: history %s: the run has no model", dir)
	}
	if r.X != nil {
		if n, _ := r.X.Dims(); n != len(r.Entries) {
			return fmt.Errorf("kinmap: history %s: %d scaled rows for %d windows", dir, n, len(r.Entries))
		}
	}
	for _, p := range r.revised {
		if err := export.WritePeriod(dir, p); err != nil {
			return err
		}
	}
	p := export.Period{Lineage: r.Model.Lineage, Windows: make([]export.HistoryWindow, len(r.Entries))}
	for i, e := range r.Entries {
		p.Windows[i].Entry = e
		if r.X != nil {
			p.Windows[i].Scaled = r.X.RawRowView(i)
		}
	}
	_, err := export.AppendHistory(dir, p)
	return err
}

// lineageOf returns the lineage of m: its own, or for a model that records
// none (a new map, one trained before lineages, or by a runner that does
// not set it) one derived from what its regime numbers mean: the feature
// schema, the lattice and the regime of every unit. Not from the codebook:
// two runs that differ only by rounding, such as the local and the Beam
// batch map, make the same regimes and so number them the same.
func lineageOf(m *mapper.Model) string {
	if m.Lineage != "" {
		return m.Lineage
	}
	h := sha256.New()
	for _, n := range m.FeatureNames {
		fmt.Fprintf(h, "%q ", n)
	}
	l := m.Map.Lattice
	fmt.Fprintf(h, "\n%d %d %t %t\n", l.Cols, l.Rows, l.Hex, l.Flat)
	for _, id := range m.UnitRegime {
		binary.Write(h, binary.LittleEndian, int64(id))
	}
	return hex.EncodeToString(h.Sum(nil)[:8])
}

// continuation is where the history of earlier dumps leaves the sites of a
// run. Decoding a period alone cannot see the windows that follow it: a
// change in its last MinDwell-1 windows, or one whose evidence was too weak
// on its own, waits for windows that only a later dump has. So each site's
// tail, the windows of its last segment in its latest period, is decoded
// again together with the run's windows, continuing from the state before
// the tail.
type continuation struct {
	periods  []export.Period           // every period of the history
	priors   map[string]timeline.Prior // state before the tail, by site
	before   map[string]windowRef      // the window the prior comes from, by site
	tail     []windowRef               // by site, then time
	warnings []string
}

// windowRef is a window of a history period.
type windowRef struct{ period, window int }

func (c *continuation) at(r windowRef) *export.HistoryWindow {
	return &c.periods[r.period].Windows[r.window]
}

// readContinuation reads the history folder dir for the windows of t,
// decoded with m. Only the windows before a site's first window in t count,
// so running a dump again does not feed on its own earlier result, and
// only periods of m's lineage: the regime numbers of another map mean other
// regimes.
func readContinuation(dir string, m *mapper.Model, t *features.Table) (*continuation, error) {
	periods, err := export.ReadHistory(dir)
	if err != nil {
		return nil, err
	}
	c := &continuation{periods: periods, priors: map[string]timeline.Prior{}, before: map[string]windowRef{}}
	first := map[string]time.Time{}
	for _, w := range t.Windows {
		if f, ok := first[w.Site]; !ok || w.Start.Before(f) {
			first[w.Site] = w.Start
		}
	}
	lineage := lineageOf(m)
	bySite := map[string][]windowRef{}
	latest := map[string]windowRef{} // over every lineage, for the warning
	for pi, p := range periods {
		for wi, w := range p.Windows {
			if f, ok := first[w.Site]; !ok || w.End.After(f) {
				continue
			}
			r := windowRef{pi, wi}
			if l, ok := latest[w.Site]; !ok || w.Start.After(c.at(l).Start) {
				latest[w.Site] = r
			}
			if p.Lineage == lineage {
				bySite[w.Site] = append(bySite[w.Site], r)
			}
		}
	}
	foreign := map[string]bool{}
	sites := 0
	for _, r := range latest {
		if p := periods[r.period]; p.Lineage != lineage {
			foreign[p.Key] = true
			sites++
		}
	}
	if sites > 0 {
		keys := slices.Sorted(maps.Keys(foreign))
		for i, k := range keys {
			keys[i] = "period " + k
		}
		c.warnings = append(c.warnings, fmt.Sprintf("history %s: %d sites were last seen in %s, numbered by another map than this model and its updates (or by a kinmap that did not record which): a switch across that boundary cannot be decoded",
			dir, sites, strings.Join(keys, ", ")))
	}
	dim := m.Map.Dim
	for _, site := range slices.Sorted(maps.Keys(bySite)) {
		refs := bySite[site]
		slices.SortFunc(refs, func(a, b windowRef) int { return c.at(a).Start.Compare(c.at(b).Start) })
		last := refs[len(refs)-1]
		i := len(refs) - 1
		for ; i >= 0; i-- {
			w := c.at(refs[i])
			if refs[i].period != last.period || w.Regime != c.at(last).Regime || len(w.Scaled) != dim {
				break
			}
		}
		c.tail = append(c.tail, refs[i+1:]...)
		if i < 0 {
			continue
		}
		regime, n := c.at(refs[i]).Regime, 0
		for j := i; j >= 0 && c.at(refs[j]).Regime == regime; j-- {
			n++
		}
		c.priors[site] = timeline.Prior{Regime: regime, Windows: n}
		c.before[site] = refs[i]
	}
	return c, nil
}

// prepend returns the inputs of the decoding with the tail windows before
// the run's: their cells and quantization errors as recorded, their scaled
// vectors from the history.
func (c *continuation) prepend(m *mapper.Model, t *features.Table, x *mat.Dense, asg []mapper.Assignment) (*features.Table, *mat.Dense, []mapper.Assignment) {
	k := len(c.tail)
	if k == 0 {
		return t, x, asg
	}
	n, dim := x.Dims()
	tt := &features.Table{Names: t.Names, Config: t.Config, Windows: make([]features.Window, 0, k+n)}
	xx := mat.NewDense(k+n, dim, nil)
	aa := make([]mapper.Assignment, 0, k+n)
	for i, r := range c.tail {
		w := c.at(r)
		tt.Windows = append(tt.Windows, features.Window{Site: w.Site, Start: w.Start, End: w.End})
		xx.SetRow(i, w.Scaled)
		aa = append(aa, mapper.Assignment{BMU: m.Map.Lattice.Unit(w.Col, w.Row), QE: w.QE})
	}
	tt.Windows = append(tt.Windows, t.Windows...)
	xx.Slice(k, k+n, 0, dim).(*mat.Dense).Copy(x)
	return tt, xx, append(aa, asg...)
}

// settle splits the decoding of the tail and the run's windows made from
// prepend's inputs. It returns the run's entries; the switches, less those
// at tail windows that the history already records (a switch whose window
// was revised by a later dump is reported again: this run supersedes that
// one); and the periods whose tail regimes changed, with those windows
// marked revised.
func (c *continuation) settle(entries []timeline.Entry, switches []timeline.Switch) ([]timeline.Entry, []timeline.Switch, []export.Period) {
	k := len(c.tail)
	if k == 0 {
		return entries, switches, nil
	}
	type key struct {
		site  string
		start int64
	}
	inTail := make(map[key]int, k)
	for i, r := range c.tail {
		w := c.at(r)
		inTail[key{w.Site, w.Start.UnixMicro()}] = i
	}
	recorded := func(s timeline.Switch) bool {
		i, ok := inTail[key{s.Site, s.Time.UnixMicro()}]
		if !ok {
			return false
		}
		w, prev := c.at(c.tail[i]), (*export.HistoryWindow)(nil)
		if i > 0 && c.at(c.tail[i-1]).Site == s.Site {
			prev = c.at(c.tail[i-1])
		} else if r, ok := c.before[s.Site]; ok {
			prev = c.at(r)
		}
		return prev != nil && prev.Regime == s.From && w.Regime == s.To && !prev.Revised && !w.Revised
	}
	switches = slices.DeleteFunc(switches, recorded)
	changed := map[int]bool{}
	for i, r := range c.tail {
		if w := c.at(r); w.Regime != entries[i].Regime {
			w.Regime, w.Revised = entries[i].Regime, true
			changed[r.period] = true
		}
	}
	var revised []export.Period
	for _, pi := range slices.Sorted(maps.Keys(changed)) {
		revised = append(revised, c.periods[pi])
	}
	return entries[k:], switches, revised
}
