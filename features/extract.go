package features

import (
	"cmp"
	"errors"
	"math"
	"slices"
	"time"

	"github.com/kinmap/kinmap/ingest"
	"github.com/kinmap/kinmap/internal/parallel"
)

// wallOrigin is the wall-clock instant window starts are counted from:
// midnight starting Monday 1970-01-05, as nanoseconds on the zone's clock.
const wallOrigin = 4 * dayNs

// clock converts between instants and the wall clock of a zone; a nil
// location is UTC, where both are the same.
type clock struct{ loc *time.Location }

// offset is the zone's offset from UTC at instant t, in nanoseconds.
func (c clock) offset(t int64) int64 {
	if c.loc == nil {
		return 0
	}
	_, off := time.Unix(0, t).In(c.loc).Zone()
	return int64(off) * int64(time.Second)
}

// wall is the zone's wall-clock reading at instant t.
func (c clock) wall(t int64) int64 { return t + c.offset(t) }

// instant returns the first instant whose wall clock reads w or later.
func (c clock) instant(w int64) int64 {
	if c.loc == nil {
		return w
	}
	// No zone runs more than 14 h ahead of UTC, so every instant before t
	// reads earlier than w; walk the zone's periods forward from there.
	t := w - 15*int64(time.Hour)
	for {
		at := time.Unix(0, t).In(c.loc)
		_, off := at.Zone()
		_, end := at.ZoneBounds()
		cand := max(t, w-int64(off)*int64(time.Second))
		if end.IsZero() || cand < end.UnixNano() {
			return cand
		}
		t = end.UnixNano()
	}
}

// steadyOffset reports the zone's offset over [start, end) and whether it
// stays the same throughout.
func (c clock) steadyOffset(start, end int64) (int64, bool) {
	if c.loc == nil {
		return 0, true
	}
	at := time.Unix(0, start).In(c.loc)
	_, off := at.Zone()
	_, until := at.ZoneBounds()
	return int64(off) * int64(time.Second), until.IsZero() || until.UnixNano() >= end
}

// siteResult is the outcome of one site.
type siteResult struct {
	windows []Window
	skips   Skips
	path    []Fix
	unused  int64 // readings in no kept window
}

// Extract cuts every site of ds into windows and computes the features
// cfg asks for, in parallel over sites on cfg.Workers goroutines. The
// package documentation describes the windows, the coverage rule and the
// features. Extract fails on an invalid cfg or a feature list naming a
// channel that ds does not have; sites or windows without data are not an
// error.
func Extract(ds *ingest.Dataset, cfg Config) (*Table, error) {
	if ds == nil {
		return nil, errors.New("features: no dataset")
	}
	loc, err := cfg.location()
	if err != nil {
		return nil, err
	}
	channels := slices.Clone(ds.Channels)
	slices.Sort(channels)
	channels = slices.Compact(channels)
	p, err := newPlan(channels, cfg)
	if err != nil {
		return nil, err
	}
	steps, err := checkData(ds, p, cfg)
	if err != nil {
		return nil, err
	}
	clk := clock{loc: loc}
	if loc == time.UTC {
		clk.loc = nil
	}

	order := make([]*ingest.SiteData, 0, len(ds.Sites))
	for _, sd := range ds.Sites {
		if sd != nil {
			order = append(order, sd)
		}
	}
	slices.SortStableFunc(order, func(a, b *ingest.SiteData) int { return cmp.Compare(a.ID, b.ID) })

	results := parallel.Map(len(order), cfg.Workers, newWorker, func(w *worker, i int) siteResult {
		return w.site(order[i], p, cfg, clk)
	})

	t := &Table{Names: p.names, Config: cfg, Skipped: map[string]Skips{}, Steps: steps, Step: MedianStep(steps)}
	total := 0
	for _, r := range results {
		total += len(r.windows)
	}
	t.Windows = make([]Window, 0, total)
	for i, r := range results {
		t.Windows = append(t.Windows, r.windows...)
		if len(r.skips) > 0 {
			t.Skipped[order[i].ID] = r.skips
		}
		if r.unused > 0 {
			if t.Unused == nil {
				t.Unused = map[string]int64{}
			}
			t.Unused[order[i].ID] = r.unused
		}
		if len(r.path) > 0 {
			if t.Paths == nil {
				t.Paths = map[string][]Fix{}
			}
			t.Paths[order[i].ID] = r.path
		}
	}
	return t, nil
}

// site cuts one site into windows.
func (w *worker) site(sd *ingest.SiteData, p *plan, cfg Config, clk clock) siteResult {
	nch := len(p.channels)
	series := make([]ingest.Series, nch)
	steps := make([]int64, nch)
	first, last := int64(math.MaxInt64), int64(math.MinInt64)
	readings := 0
	for i, ch := range p.channels {
		s := sd.Series[ch]
		if s.Len() == 0 || !p.used[i] {
			continue
		}
		readings += s.Len()
		series[i] = s
		steps[i] = w.medianStep(s.Times)
		first = min(first, s.Times[0])
		last = max(last, s.Times[s.Len()-1])
	}
	res := siteResult{skips: Skips{}, unused: int64(readings)}
	if first > last {
		return res
	}
	size, stride := int64(cfg.Window), int64(cfg.Stride)
	if stride == 0 {
		stride = size
	}
	bounds := func(k int64) (start, end int64) {
		ws := wallOrigin + k*stride
		return clk.instant(ws), clk.instant(ws + size)
	}
	// k is the first window that ends after the first reading: start from
	// the wall-clock estimate and step back over any shift of the zone.
	k := floorDiv(clk.wall(first)-wallOrigin-size, stride)
	for {
		if _, end := bounds(k - 1); end <= first {
			break
		}
		k--
	}

	nfeat := len(p.names)
	est := int(min((last-first)/stride+2, int64(readings)))
	res.windows = make([]Window, 0, est)
	slab := make([]float64, 0, est*nfeat)
	lo, hi := make([]int, nch), make([]int, nch)
	covered := make([]int, nch) // readings before it are in a kept window
	var posLo, posHi int
	track := sd.Track
	for ; ; k++ {
		start, end := bounds(k)
		if start > last {
			break
		}
		if end <= first || end <= start {
			continue
		}
		present := false
		coverage := 1.0
		for i, s := range series {
			for lo[i] < len(s.Times) && s.Times[lo[i]] < start {
				lo[i]++
			}
			hi[i] = max(hi[i], lo[i])
			for hi[i] < len(s.Times) && s.Times[hi[i]] < end {
				hi[i]++
			}
			got := hi[i] - lo[i]
			present = present || got > 0
			if steps[i] > 0 {
				expected := float64(end-start) / float64(steps[i])
				coverage = min(coverage, float64(got)/expected)
			}
		}
		switch {
		case !present:
			res.skips[reasonEmpty]++
			continue
		case coverage < cfg.MinCoverage:
			res.skips[reasonCoverage]++
			continue
		}

		for i := range series {
			res.unused -= int64(max(0, hi[i]-max(lo[i], covered[i])))
			covered[i] = max(covered[i], hi[i])
		}
		off, steady := clk.steadyOffset(start, end)
		for i, s := range series {
			if p.stats[i] == 0 {
				continue
			}
			w.channelStats(span{
				times: s.Times[lo[i]:hi[i]], vals: s.Values[lo[i]:hi[i]],
				start: start, end: end, step: steps[i],
				clk: clk, off: off, steady: steady,
			}, p.stats[i])
			for st := range numStats {
				if p.stats[i].has(st) {
					slab = append(slab, w.vals[st])
				}
			}
		}
		for _, pr := range p.pairs {
			a, b := series[pr[0]], series[pr[1]]
			slab = append(slab, w.corr(
				a.Times[lo[pr[0]]:hi[pr[0]]], a.Values[lo[pr[0]]:hi[pr[0]]],
				b.Times[lo[pr[1]]:hi[pr[1]]], b.Values[lo[pr[1]]:hi[pr[1]]]))
		}

		win := Window{Site: sd.ID, Start: time.Unix(0, start).UTC(), End: time.Unix(0, end).UTC()}
		for posLo < track.Len() && track.Times[posLo] < start {
			posLo++
		}
		posHi = max(posHi, posLo)
		for posHi < track.Len() && track.Times[posHi] < end {
			posHi++
		}
		win.Lat, win.Lon, win.Located = centroid(track.Lat[posLo:posHi], track.Lon[posLo:posHi])
		if !win.Located && sd.Info != nil && sd.Info.Located {
			win.Lat, win.Lon, win.Located = sd.Info.Lat, sd.Info.Lon, true
		}
		res.windows = append(res.windows, win)
	}
	// The slab no longer grows: hand each window its row.
	for i := range res.windows {
		res.windows[i].Values = slab[i*nfeat : (i+1)*nfeat : (i+1)*nfeat]
	}
	if len(res.windows) > 0 {
		res.path = path(track)
	}
	return res
}

// centroid is the spherical centroid of positions in degrees: the mean of
// their unit vectors, projected back onto the sphere. It reports false when
// there are no positions or they balance out (the mean vector is nearly 0).
func centroid(lat, lon []float64) (float64, float64, bool) {
	var x, y, z float64
	for i := range lat {
		sp, cp := math.Sincos(lat[i] * math.Pi / 180)
		sl, cl := math.Sincos(lon[i] * math.Pi / 180)
		x += cp * cl
		y += cp * sl
		z += sp
	}
	n := float64(len(lat))
	if n == 0 || math.Sqrt(x*x+y*y+z*z) < 1e-9*n {
		return 0, 0, false
	}
	return math.Atan2(z, math.Hypot(x, y)) * 180 / math.Pi, math.Atan2(y, x) * 180 / math.Pi, true
}
