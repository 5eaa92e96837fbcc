package ingest

import "slices"

// prepared is a batch turned into readings grouped by series, by work that
// needs nothing shared between batches, so that batches are prepared in
// parallel; merge then files them, in read order, under global site and
// channel numbers.
type prepared struct {
	b        *batch
	siteDict []string // the sites of the batch, by local code
	chanDict []string // long: the channels of the batch; wide: the candidate columns
	naive    bool
	drops    [nDrops]int64 // row drops, and value drops of a long batch
	cols     []wideColumn  // wide: by candidate column
	arenas   []arena
	runs     []localRun // by arena, then block, then first appearance
	pos      positions
	// When a batch has too many sites and channels for a table of every
	// pair, keys number the pairs met: pairs[key] = site*len(chanDict) +
	// channel. Otherwise a key is that number itself.
	pairs    []int64
	numbered map[int64]int32
}

// keySpace returns the number of possible pairs of a batch of n rows,
// or 0 after switching to numbering when a table would be too big.
func (p *prepared) keySpace(nPairs int64, n int) int {
	if nPairs <= int64(max(1<<16, 4*n)) {
		return int(nPairs)
	}
	p.numbered = make(map[int64]int32)
	return 0
}

// key gives the key of a pair.
func (p *prepared) key(pair int64) int32 {
	if p.numbered == nil {
		return int32(pair)
	}
	k, ok := p.numbered[pair]
	if !ok {
		k = int32(len(p.pairs))
		p.numbered[pair] = k
		p.pairs = append(p.pairs, pair)
	}
	return k
}

// pair gives the pair of a key.
func (p *prepared) pair(key int32) int64 {
	if p.numbered == nil {
		return int64(key)
	}
	return p.pairs[key]
}

// localRun is readings of the local series key = site*len(chanDict) +
// channel in arena arena.
type localRun struct {
	arena, key, off, n int32
}

// wideColumn says what a candidate channel column of a wide batch held.
type wideColumn struct {
	text   bool // CSV cells, numeric or not by what they hold
	bad    int  // first row that is not a number, -1 for none
	filled int  // rows with a cell that is not blank
	drops  [nDrops]int64
}

// positions are the rows with a position, by local site code.
type positions struct {
	site     []int32
	t        []int64
	lat, lon []float64
}

// prepare reads the rows of a batch. It uses only the options of the
// reader, never its accumulating state.
func (r *reader) prepare(b *batch, ro roles) (*prepared, error) {
	p := &prepared{b: b}
	codes, dict, err := b.keys(b.cols[ro.site])
	if err != nil {
		return nil, err
	}
	ns, state, naive, err := b.times(b.cols[ro.time], r.epoch)
	if err != nil {
		return nil, err
	}
	p.siteDict, p.naive = dict, naive
	sites := codes // local site of a row, -1 when it is dropped
	if state != nil {
		sites = make([]int32, b.n)
		for i, c := range codes {
			switch {
			case c < 0:
			case state[i] == timeNull:
				p.drops[dNullTime]++
				c = -1
			case state[i] == timeRange:
				p.drops[dTimeRange]++
				c = -1
			}
			sites[i] = c
		}
	}
	for _, c := range codes {
		if c < 0 {
			p.drops[dNullSite]++
		}
	}
	if ro.lat >= 0 {
		if err := p.positions(b, ro, sites, ns); err != nil {
			return nil, err
		}
	}
	if ro.channel >= 0 {
		return p, p.long(b, ro, r.selected, sites, ns)
	}
	p.cols = make([]wideColumn, len(ro.channels))
	for _, ci := range ro.channels {
		p.chanDict = append(p.chanDict, b.cols[ci].name)
	}
	nKeys := p.keySpace(int64(len(p.siteDict))*int64(len(p.chanDict)), b.n)
	for j, ci := range ro.channels {
		if err := p.wide(b, b.cols[ci], j, nKeys, sites, ns); err != nil {
			return nil, err
		}
	}
	return p, nil
}

func (p *prepared) positions(b *batch, ro roles, sites []int32, ns []int64) error {
	latC, lonC := b.cols[ro.lat], b.cols[ro.lon]
	lat, latOK, err := b.floats(latC)
	if err != nil {
		return err
	}
	lon, lonOK, err := b.floats(lonC)
	if err != nil {
		return err
	}
	for i, s := range sites {
		if s < 0 || latOK != nil && !latOK[i] || lonOK != nil && !lonOK[i] {
			continue
		}
		if err := checkPosition(lat[i], lon[i], latC.name, lonC.name, lon[i] >= -90 && lon[i] <= 90); err != nil {
			return b.errAt(i, "", "%v", err)
		}
		p.pos.site = append(p.pos.site, s)
		p.pos.t = append(p.pos.t, ns[i])
		p.pos.lat = append(p.pos.lat, lat[i])
		p.pos.lon = append(p.pos.lon, lon[i])
	}
	return nil
}

func (p *prepared) long(b *batch, ro roles, selected map[string]bool, sites []int32, ns []int64) error {
	codes, dict, err := b.keys(b.cols[ro.channel])
	if err != nil {
		return err
	}
	vals, valid, err := b.floats(b.cols[ro.value])
	if err != nil {
		return err
	}
	p.chanDict = dict
	chans := make([]int32, len(dict)) // -1 for channels not selected
	for j, name := range dict {
		if chans[j] = int32(j); selected != nil && !selected[name] {
			chans[j] = -1
		}
	}
	nch := int64(len(dict))
	nKeys := p.keySpace(int64(len(p.siteDict))*nch, b.n)
	p.group(sites, nKeys, ns, vals, func(lo int, keys []int32) (kept int) {
		for i, s := range keys {
			if s < 0 {
				continue
			}
			keys[i] = -1
			r := lo + i
			code := codes[r]
			if code < 0 {
				p.drops[dNullChannel]++
				continue
			}
			ch := chans[code]
			if ch < 0 {
				continue
			}
			if d := dropOf(vals[r], valid != nil && !valid[r]); d >= 0 {
				p.drops[d]++
				continue
			}
			keys[i] = p.key(int64(s)*nch + int64(ch))
			kept++
		}
		return kept
	})
	return nil
}

// wide reads candidate channel column j.
func (p *prepared) wide(b *batch, c *column, j, nKeys int, sites []int32, ns []int64) error {
	wc := &p.cols[j]
	wc.bad = -1
	var (
		vals  []float64
		valid []bool
		err   error
	)
	if c.kind == kindText {
		wc.text = true
		if vals, valid, wc.bad, wc.filled = parseFloats(c.text); wc.bad >= 0 {
			return nil
		}
	} else if vals, valid, err = b.floats(c); err != nil {
		return err
	}
	nch := int64(len(p.chanDict))
	p.group(sites, nKeys, ns, vals, func(lo int, keys []int32) (kept int) {
		for i, s := range keys {
			if s < 0 {
				continue
			}
			keys[i] = -1
			r := lo + i
			if d := dropOf(vals[r], valid != nil && !valid[r]); d >= 0 {
				wc.drops[d]++
				continue
			}
			keys[i] = p.key(int64(s)*nch + int64(j))
			kept++
		}
		return kept
	})
	return nil
}

// dropOf says why a value is dropped, -1 when it is kept.
func dropOf(v float64, null bool) int {
	switch {
	case null:
		return dNullValue
	case v != v:
		return dNaN
	case v-v != 0: // ±Inf
		return dInf
	}
	return -1
}

// group files the readings of a batch into arenas, sorted by key and in
// read order within a key: a counting sort in blocks small enough for the
// caches. keysOf turns the local sites of the rows of a block, from row lo
// on, into keys below nKeys (or numbered by p.key), -1 for a row without
// reading, and counts the readings. A dump ordered by time puts consecutive readings in different
// series, and writing thousands of series at random would miss the caches
// on every reading.
func (p *prepared) group(sites []int32, nKeys int, ns []int64, vals []float64, keysOf func(lo int, keys []int32) int) {
	n := len(sites)
	next := make([]int32, nKeys) // per key: count, then next slot, within a block
	buf := make([]int32, min(n, groupBlock))
	var touched []int32
	for lo := 0; lo < n; lo += groupBlock {
		keys := buf[:min(n-lo, groupBlock)]
		copy(keys, sites[lo:])
		kept := keysOf(lo, keys)
		if kept == 0 {
			continue
		}
		if len(p.pairs) > len(next) { // keys numbered as they come
			next = append(next, make([]int32, len(p.pairs)-len(next))...)
		}
		touched = touched[:0]
		for _, k := range keys {
			if k < 0 {
				continue
			}
			if next[k] == 0 {
				touched = append(touched, k)
			}
			next[k]++
		}
		a := int32(len(p.arenas))
		off := int32(0)
		p.runs = slices.Grow(p.runs, len(touched))
		for _, k := range touched {
			c := next[k]
			p.runs = append(p.runs, localRun{a, k, off, c})
			next[k] = off
			off += c
		}
		ar := arena{times: make([]int64, kept), vals: make([]float64, kept)}
		ts, vs := ns[lo:lo+len(keys)], vals[lo:lo+len(keys)]
		for i, k := range keys {
			if k < 0 {
				continue
			}
			q := next[k]
			next[k]++
			ar.times[q], ar.vals[q] = ts[i], vs[i]
		}
		for _, k := range touched {
			next[k] = 0
		}
		p.arenas = append(p.arenas, ar)
	}
}

// groupBlock is the number of rows group sorts at a time.
const groupBlock = 1 << 17

// merge files a prepared batch under the global site, channel and series
// numbers; batches are merged in read order.
func (r *reader) merge(p *prepared, ro roles) error {
	b := p.b
	r.sum.NaiveTime = r.sum.NaiveTime || p.naive
	for i, n := range p.drops {
		r.drops[i] += n
	}
	sites := make([]int32, len(p.siteDict))
	for j, id := range p.siteDict {
		sites[j] = r.siteIndex(id)
	}
	chans := make([]int32, len(p.chanDict))
	for j, name := range p.chanDict {
		if ro.channel >= 0 {
			chans[j] = r.channelIndex(name)
			continue
		}
		keep, err := r.wideColumn(b, b.cols[ro.channels[j]], &p.cols[j])
		if err != nil {
			return err
		}
		chans[j] = -1
		if keep {
			chans[j] = r.channelIndex(name)
		}
	}
	for k := range p.pos.site {
		r.sites[sites[p.pos.site[k]]].track.add(p.pos.t[k], [2]float64{p.pos.lat[k], p.pos.lon[k]})
	}
	r.fitTable()
	base := int32(len(r.kept.arenas))
	r.kept.arenas = append(r.kept.arenas, p.arenas...)
	nch := int64(len(p.chanDict))
	for _, lr := range p.runs {
		pair := p.pair(lr.key)
		ch := chans[pair%nch]
		if ch < 0 {
			continue
		}
		s := sites[pair/nch]
		id := r.table[int(s)*r.stride+int(ch)] - 1
		if id < 0 {
			id = r.newSeries(s, ch)
		}
		r.kept.runs[id] = append(r.kept.runs[id], run{base + lr.arena, lr.off, lr.n})
	}
	return nil
}

// wideColumn decides, from what earlier batches held, whether a candidate
// column of a wide batch is a channel, and counts its drops if so.
func (r *reader) wideColumn(b *batch, c *column, wc *wideColumn) (keep bool, err error) {
	name := c.name
	state := r.wide[name]
	switch {
	case wc.bad >= 0 && (state == wideNumeric || r.selected != nil):
		return false, b.errAt(wc.bad, name, "%q is not a number", c.text[wc.bad])
	case wc.bad >= 0 || wc.text && state == wideSkipped:
		r.skip(name)
		delete(r.pending, name)
		return false, nil
	case !wc.text && state == wideSkipped:
		return false, colErr(name, "numeric here, but not numeric in an earlier file")
	case wc.text && wc.filled == 0 && state == wideUnknown:
		r.pending[name] += wc.drops[dNullValue]
		return false, nil
	}
	r.wide[name] = wideNumeric
	r.drops[dNullValue] += r.pending[name]
	delete(r.pending, name)
	for i, n := range wc.drops {
		r.drops[i] += n
	}
	return true, nil
}
