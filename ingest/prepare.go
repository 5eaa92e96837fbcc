package ingest

import (
	"slices"
	"unicode/utf8"
)

// prepared is a batch turned into readings grouped by series, by work that
// needs nothing shared between batches, so that batches are prepared in
// parallel; merge then files them, in read order, under global site and
// channel numbers.
type prepared struct {
	b          *batch   // nil once merge needs it no more
	rows       int      // rows of the batch
	siteDict   []string // the sites of the batch, by local code
	chanDict   []string // long: the channels of the batch; wide: the candidate columns
	naive      bool
	drops      [nDrops]int64   // row drops, and value drops of a long batch
	unselected []int64         // long: rows of channels not selected, by channel code
	siteDrops  [][nDrops]int64 // the drops of drops that have a site, by local site code
	epoch      int64           // the batch's first integer epoch time, if epochSeen
	epochSeen  bool
	cols       []wideColumn // wide: by candidate column
	arena      arena
	pos        positions
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

// arena is the memory a batch is grouped in: its readings, by block, then
// series, and the runs that find them, by key. Once merge is done with it,
// it serves a later batch.
type arena struct {
	times []int64
	vals  []float64
	runs  []localRun
	keys  []int32    // group: the keys of the rows of a block
	tmp   []localRun // sortRuns
}

// empty returns the arena without its readings and runs, keeping the memory.
func (a arena) empty() arena {
	a.times, a.vals, a.runs = a.times[:0], a.vals[:0], a.runs[:0]
	return a
}

// localRun is readings of the local series key = site*len(chanDict) +
// channel in the arena of the batch.
type localRun struct {
	key, n int32
	off    int
	tail   bool // in the last block of the batch
}

// wideColumn says what a candidate channel column of a wide batch held.
type wideColumn struct {
	text   bool // CSV cells, numeric or not by what they hold
	bad    int  // first row that is not a number, -1 for none
	filled int  // rows with a cell that is not blank
	drops  [nDrops]int64
	// the drops of drops, by local site code
	siteDrops [][nDrops]int64
}

// positions are the rows with a position, by local site code.
type positions struct {
	site     []int32
	t        []int64
	lat, lon []float64
}

// prepare reads the rows of a batch. It uses only the options of the
// reader, never its accumulating state, and arenas that merge is done with.
func (r *reader) prepare(b *batch, ro roles) (*prepared, error) {
	p := &prepared{b: b, rows: b.n}
	select {
	case p.arena = <-r.arenas:
	default:
	}
	codes, dict, err := b.keys(b.cols[ro.site])
	if err != nil {
		return nil, err
	}
	if err := b.checkUTF8(codes, dict, b.cols[ro.site].name, "site id"); err != nil {
		return nil, err
	}
	ns, state, naive, err := b.times(b.cols[ro.time], r.epoch)
	if err != nil {
		return nil, err
	}
	p.siteDict, p.naive = dict, naive
	p.epoch, p.epochSeen = b.epoch, b.epochSeen
	sites := codes // local site of a row, -1 when it is dropped
	if state != nil {
		sites = make([]int32, b.n)
		for i, c := range codes {
			switch {
			case c < 0:
			case state[i] == timeNull:
				p.drops[dNullTime]++
				p.siteDrops = countDrop(p.siteDrops, c, dNullTime, len(dict))
				c = -1
			case state[i] == timeRange:
				p.drops[dTimeRange]++
				p.siteDrops = countDrop(p.siteDrops, c, dTimeRange, len(dict))
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
		err := p.long(b, ro, r.selected, sites, ns)
		p.b = nil // merge needs no column of a long batch
		return p, err
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
		if err := checkPosition(lat[i], lon[i], latC.name, lonC.name, swappable(lat[i], lon[i])); err != nil {
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
	if err := b.checkUTF8(codes, dict, b.cols[ro.channel].name, "channel name"); err != nil {
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
	p.group(nKeys, ns, vals, func(lo int, t *tally) {
		sites, codes, vals := sites[lo:lo+len(t.keys)], codes[lo:lo+len(t.keys)], vals[lo:lo+len(t.keys)]
		direct := p.numbered == nil // p.key without a look-up
		for i, s := range sites {
			ch, v := int32(-1), vals[i]
			if code := codes[i]; s >= 0 && code >= 0 {
				ch = chans[code]
			}
			// Nearly every row is kept: one test for them (false for
			// NaN, infinities and sentinels), the reasons of the others
			// after.
			if ch >= 0 && v < SentinelMagnitude && v > -SentinelMagnitude && (valid == nil || valid[lo+i]) {
				if pair := int64(s)*nch + int64(ch); direct {
					t.put(i, int32(pair))
				} else {
					t.put(i, p.key(pair))
				}
				continue
			}
			t.keys[i] = -1
			switch {
			case s < 0:
			case codes[i] < 0:
				p.drops[dNullChannel]++
				p.siteDrops = countDrop(p.siteDrops, s, dNullChannel, len(p.siteDict))
			case ch >= 0:
				d := dropOf(v, valid != nil && !valid[lo+i])
				p.drops[d]++
				p.siteDrops = countDrop(p.siteDrops, s, d, len(p.siteDict))
			default:
				if p.unselected == nil {
					p.unselected = make([]int64, len(dict))
				}
				p.unselected[codes[i]]++
			}
		}
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
	p.group(nKeys, ns, vals, func(lo int, t *tally) {
		for i, s := range sites[lo : lo+len(t.keys)] {
			t.keys[i] = -1
			if s < 0 {
				continue
			}
			r := lo + i
			if d := dropOf(vals[r], valid != nil && !valid[r]); d >= 0 {
				wc.drops[d]++
				wc.siteDrops = countDrop(wc.siteDrops, s, d, len(p.siteDict))
				continue
			}
			t.put(i, p.key(int64(s)*nch+int64(j)))
		}
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
	case v >= SentinelMagnitude || v <= -SentinelMagnitude:
		return dSentinel
	}
	return -1
}

// countDrop adds one to the count of drop reason d of site s in counts,
// made for n sites when nil.
func countDrop(counts [][nDrops]int64, s int32, d, n int) [][nDrops]int64 {
	if counts == nil {
		counts = make([][nDrops]int64, n)
	}
	counts[s][d]++
	return counts
}

// group files the readings of a batch into the arena, sorted by key and in
// read order within a key: a counting sort in blocks small enough for the
// caches. keysOf files the rows of a block, from row lo on, under their keys
// with t.put: keys below nKeys, or numbered by p.key; the others get key
// -1. A dump ordered by time puts consecutive readings in different series,
// and writing thousands of series at random would miss the caches on every
// reading.
func (p *prepared) group(nKeys int, ns []int64, vals []float64, keysOf func(lo int, t *tally)) {
	n := len(ns)
	a := &p.arena
	a.times, a.vals = slices.Grow(a.times, n), slices.Grow(a.vals, n)
	a.keys = reuse(a.keys, min(n, groupBlock))
	t := &tally{next: make([]int32, nKeys)}
	first := len(a.runs)
	for lo := 0; lo < n; lo += groupBlock {
		t.keys, t.touched, t.kept = a.keys[:min(n-lo, groupBlock)], t.touched[:0], 0
		if need := len(p.pairs) + len(t.keys); p.numbered != nil && need > len(t.next) {
			t.next = append(t.next, make([]int32, need-len(t.next))...) // room for the keys the block may number
		}
		keysOf(lo, t)
		if t.kept == 0 {
			continue
		}
		// Room for as many runs in the blocks to come.
		a.runs = slices.Grow(a.runs, len(t.touched)*((n-lo+groupBlock-1)/groupBlock))
		base := len(a.times)
		next := t.next
		off := int32(0)
		for _, k := range t.touched {
			c := next[k]
			a.runs = append(a.runs, localRun{k, c, base + int(off), lo+groupBlock >= n})
			next[k] = off
			off += c
		}
		a.times, a.vals = a.times[:base+t.kept], a.vals[:base+t.kept]
		at, av := a.times[base:], a.vals[base:]
		ts, vs := ns[lo:lo+len(t.keys)], vals[lo:lo+len(t.keys)]
		for i, k := range t.keys {
			if k < 0 {
				continue
			}
			q := next[k]
			next[k]++
			at[q], av[q] = ts[i], vs[i]
		}
		for _, k := range t.touched {
			next[k] = 0
		}
	}
	a.sortRuns(first, t.next)
}

// tally is the keys of the rows of a block, and the readings of each key.
type tally struct {
	keys    []int32 // by row, -1 for a row without reading
	next    []int32 // by key: readings, then group's next slot
	touched []int32 // keys in order of first reading
	kept    int
}

// put files row i under key k.
func (t *tally) put(i int, k int32) {
	if t.next[k] == 0 {
		t.touched = append(t.touched, k)
	}
	t.next[k]++
	t.keys[i] = k
	t.kept++
}

// sortRuns puts the runs from first on of a key next to each other, in
// block order, so that merge copies the readings of a series in one go;
// count is zero and has a slot for every key.
func (a *arena) sortRuns(first int, count []int32) {
	runs := a.runs[first:]
	for _, r := range runs {
		count[r.key]++
	}
	pos := int32(0)
	for k, c := range count {
		count[k] = pos
		pos += c
	}
	a.tmp = reuse(a.tmp, len(runs))
	for _, r := range runs {
		a.tmp[count[r.key]] = r
		count[r.key]++
	}
	copy(runs, a.tmp)
}

// groupBlock is the number of rows group sorts at a time.
const groupBlock = 1 << 18

// merge files a prepared batch under the global site, channel and series
// numbers; batches are merged in read order. ahead is the number of rows
// the file has after the batch per row of the batch, 0 when unknown.
func (r *reader) merge(p *prepared, ro roles, ahead float64) error {
	b := p.b
	r.sum.NaiveTime = r.sum.NaiveTime || p.naive
	if p.epochSeen && !r.epochSeen {
		r.epochSample, r.epochSeen = p.epoch, true
	}
	for i, n := range p.drops {
		r.drops[i] += n
	}
	sites := make([]int32, len(p.siteDict))
	for j, id := range p.siteDict {
		sites[j] = r.siteIndex(id)
	}
	r.addDrops(p.siteDrops, sites)
	chans := make([]int32, len(p.chanDict))
	for j, name := range p.chanDict {
		if ro.channel >= 0 {
			if chans[j] = r.channelIndex(name); chans[j] < 0 && p.unselected != nil && p.unselected[j] > 0 {
				r.unselect(name, p.unselected[j])
			}
			continue
		}
		keep, err := r.wideColumn(b, b.cols[ro.channels[j]], &p.cols[j])
		if err != nil {
			return err
		}
		chans[j] = -1
		if keep {
			r.addDrops(p.cols[j].siteDrops, sites)
			chans[j] = r.channelIndex(name)
		}
	}
	for k := range p.pos.site {
		r.sites[sites[p.pos.site[k]]].track.add(p.pos.t[k], [2]float64{p.pos.lat[k], p.pos.lon[k]})
	}
	r.fitTable()
	// Room for the readings the rest of the file would bring at the pace
	// of this batch, a batch more for the rounding of allocations.
	limit := int64(float64(len(p.arena.times)) * (ahead + 1))
	nch := int64(len(p.chanDict))
	a := &p.arena
	for i := 0; i < len(a.runs); {
		key, n := a.runs[i].key, 0
		j := i
		for ; j < len(a.runs) && a.runs[j].key == key; j++ {
			n += int(a.runs[j].n)
		}
		runs := a.runs[i:j]
		i = j
		pair := p.pair(key)
		ch := chans[pair%nch]
		if ch < 0 {
			continue
		}
		s := sites[pair/nch]
		id := r.table[int(s)*r.stride+int(ch)] - 1
		if id < 0 {
			id = r.newSeries(s, ch)
		}
		// A series that earlier batches held and that still reports at the
		// end of this one, as in a dump ordered by time, will likely report
		// in every batch to come. One that starts here may be all there is,
		// as in a dump ordered by site: room for more would be wasted.
		extra := 0
		if len(r.kept.times[id]) > 0 && runs[len(runs)-1].tail {
			extra = int(float64(n) * ahead)
		}
		r.kept.reserve(id, n, extra, limit)
		for _, lr := range runs {
			end := lr.off + int(lr.n)
			r.kept.add(id, a.times[lr.off:end], a.vals[lr.off:end])
		}
	}
	select {
	case r.arenas <- a.empty():
	default:
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

// addDrops adds the drops of a batch, by local site code, to the sites
// they belong to (sites maps local codes to global ones).
func (r *reader) addDrops(counts [][nDrops]int64, sites []int32) {
	for j := range counts {
		for d, n := range counts[j] {
			r.sites[sites[j]].drops[d] += n
		}
	}
}

// checkUTF8 refuses names (site ids, channel names) that are not UTF-8,
// naming the first row that holds one. They are keys of the outputs, and
// GeoJSON and JSON must be UTF-8 (RFC 8259 section 8.1, RFC 7946): written
// as they are they would become invalid files, and replacing the bad bytes
// would merge distinct names such as "caf\xe9" and "caf\xe8". Guessing the
// encoding could be wrong, so the user converts the file.
func (b *batch) checkUTF8(codes []int32, dict []string, column, what string) error {
	bad := -1
	for j, name := range dict {
		if !utf8.ValidString(name) {
			bad = j
			break
		}
	}
	if bad < 0 {
		return nil
	}
	name := dict[bad]
	at := 0
	for at < len(name) {
		r, size := utf8.DecodeRuneInString(name[at:])
		if r == utf8.RuneError && size <= 1 {
			break
		}
		at += size
	}
	for i, c := range codes {
		if int(c) == bad {
			return b.errAt(i, column, "%s %q is not UTF-8 (byte 0x%02x at offset %d): the file has another encoding; convert it to UTF-8 (for example iconv -f latin1 -t utf-8)",
				what, name, name[at], at)
		}
	}
	return nil
}
