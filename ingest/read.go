package ingest

import (
	"errors"
	"fmt"
	"io/fs"
	"maps"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"time"
)

// Read reads one or more dumps into per-site, per-channel series.
//
// Paths may be glob patterns (filepath.Match syntax); a pattern must match
// at least one file, and its matches are read in sorted order. Files are
// read in the order given. The format of each file is detected from its
// content (see DetectFormat): Parquet, Arrow IPC file or stream, CSV with a
// header row (comma, semicolon or tab), any of the stream formats
// gzip-compressed. Every file must have the same layout.
//
// Column mapping: the layout is long when the file has both
// Options.ChannelCol and Options.ValueCol, wide otherwise. In a wide dump
// every numeric column other than the site, time, lat and lon columns is a
// channel (Options.Channels picks some); the other columns are skipped and
// listed in Summary.SkippedColumns. In a long dump Options.Channels, when
// given, keeps only the readings of those channels. A selected channel that
// no file holds is an error. Lat and lon columns, when a dump has both,
// give the SiteData.Track of each site.
//
// Values: site ids are strings or integers (integers become their decimal
// form); times are timestamps of any unit, dates, integer epochs in
// Options.TimeUnit, or RFC 3339 strings (a time without zone, a
// non-UTC-adjusted timestamp or a date is read as UTC and
// Summary.NaiveTime is set); readings are integers or floats of any width,
// as float64. In CSV a blank cell is null, a time cell holding an integer is
// an epoch, and the types of columns come from their cells: a column of
// numbers is numeric (in a wide CSV dump, a column whose first filled batch
// of rows holds anything else is skipped, and a later non-number in a
// numeric column is an error). Null sites, null or out-of-range times, null
// channels, and null, NaN or infinite values are dropped and counted in
// Summary.Dropped; so are values of magnitude SentinelMagnitude or more,
// bad-quality markers. Summary.SiteDropped counts the drops by site.
//
// Duplicates: of several readings of the same site, channel and time, the
// one read last wins (files in the order given, rows in file order); the
// others are counted in Summary.Duplicates. Positions follow the same rule
// without being counted.
//
// When Options.Register is set, each site gets its entry in SiteData.Info;
// sites the register lacks are kept, without position, and listed in
// Summary.Unregistered.
//
// Errors name the file, the column and the problem. Problems with the
// options or the paths match ErrUsage; the others are about the data. No
// reading at all is an error too.
//
// Read streams each file a batch (a Parquet row group, an Arrow record
// batch, some thousands of CSV rows) at a time and prepares batches on
// several cores. The series of the result share a few large arrays.
func Read(paths []string, opt Options) (*Dataset, error) {
	if err := opt.Validate(); err != nil {
		return nil, err
	}
	files, err := expand(paths)
	if err != nil {
		return nil, err
	}
	r := newReader(opt)
	for _, path := range files {
		if err := r.readFile(path); err != nil {
			return nil, inFile(err, path)
		}
	}
	return r.finish()
}

// expand resolves glob patterns; a pattern that matches nothing and a
// missing file are usage errors.
func expand(paths []string) ([]string, error) {
	if len(paths) == 0 {
		return nil, usagef("no input file")
	}
	var files []string
	for _, p := range paths {
		if !strings.ContainsAny(p, `*?[\`) {
			if err := checkFile(p); err != nil {
				return nil, err
			}
			files = append(files, p)
			continue
		}
		matches, err := filepath.Glob(p)
		if err != nil {
			return nil, usagef("bad pattern %q: %v", p, err)
		}
		// A pattern such as week48/* may also match folders; they are no dumps.
		matches = slices.DeleteFunc(matches, func(m string) bool {
			st, err := os.Stat(m)
			return err == nil && st.IsDir()
		})
		if len(matches) == 0 {
			return nil, usagef("pattern %q matches no file", p)
		}
		slices.Sort(matches)
		files = append(files, matches...)
	}
	return files, nil
}

// checkFile makes a missing file or a directory a usage error.
func checkFile(path string) error {
	st, err := os.Stat(path)
	switch {
	case errors.Is(err, fs.ErrNotExist):
		return usagef("%s: no such file", path)
	case err != nil:
		return &Error{File: path, Err: err}
	case st.IsDir():
		return usagef("%s: is a directory", path)
	}
	return nil
}

// Indexes of the drop reasons in reader.drops.
const (
	dNullSite = iota
	dNullTime
	dTimeRange
	dNullChannel
	dNullValue
	dNaN
	dInf
	dSentinel
	nDrops
)

var dropNames = [nDrops]string{DropNullSite, DropNullTime, DropTimeRange, DropNullChannel, DropNullValue, DropNaN, DropInf, DropSentinel}

// States of a candidate channel column of a wide dump.
const (
	wideUnknown = iota // only blank CSV cells so far
	wideNumeric
	wideSkipped
)

// reader accumulates the readings of the files of one Read.
type reader struct {
	opt      Options
	epoch    int64 // nanoseconds per unit of integer epochs
	selected map[string]bool
	layout   string
	sites    []*siteAcc
	siteIdx  map[string]int32
	channels []string
	chanIdx  map[string]int32
	wide     map[string]int   // wide layout: state of each candidate column
	pending  map[string]int64 // wide CSV: blank cells of columns still unknown
	present  map[string]bool  // channels met that are not selected, and wide candidate columns
	drops    [nDrops]int64
	sum      Summary
	// the first integer epoch time read, as written
	epochSample int64
	epochSeen   bool

	kept       store      // the readings kept
	arenas     chan arena // arenas merge is done with, for prepare to reuse
	seriesSite []int32    // site of each series
	seriesChan []int32    // channel of each series
	table      []int32    // series+1 by site*stride+channel, 0 for none yet
	stride     int
}

// siteAcc collects the positions of one site.
type siteAcc struct {
	id    string
	track builder[[2]float64]
	drops [nDrops]int64 // rows and readings of the site dropped, by reason
}

func newReader(opt Options) *reader {
	r := &reader{
		opt:     opt,
		siteIdx: make(map[string]int32),
		chanIdx: make(map[string]int32),
		wide:    make(map[string]int),
		pending: make(map[string]int64),
		present: make(map[string]bool),
		arenas:  make(chan arena, 4),
	}
	r.epoch, _ = unitNanos(opt.TimeUnit)
	if len(opt.Channels) > 0 {
		r.selected = make(map[string]bool)
		for _, ch := range opt.Channels {
			r.selected[ch] = true
		}
	}
	return r
}

// roles are the field indexes of the columns of a file, -1 when absent.
type roles struct {
	site, time, channel, value, lat, lon int
	channels                             []int    // wide: candidate channel columns
	unselected                           []string // wide: numeric columns not selected
}

func (r *reader) readFile(path string) error {
	in, err := openInput(path)
	if err != nil {
		return err
	}
	defer in.close()
	src, err := in.source()
	if err != nil {
		return err
	}
	defer src.close()
	fields := src.schema()
	ro, err := r.mapColumns(fields)
	if err != nil {
		return err
	}
	want := make([]bool, len(fields))
	for _, i := range append([]int{ro.site, ro.time, ro.channel, ro.value, ro.lat, ro.lon}, ro.channels...) {
		if i >= 0 {
			want[i] = true
		}
	}
	r.noteUnits(fields, ro.channels)
	fs := FileSummary{Path: path, Format: in.format}
	total := int64(-1) // rows of the file, -1 when the source cannot tell
	if sz, ok := src.(interface{ numRows() int64 }); ok {
		total = sz.numRows()
	}
	err = pipeline(src, want, r.opt.Workers,
		func(b *batch) (*prepared, error) { return r.prepare(b, ro) },
		func(p *prepared) error {
			fs.Rows += int64(p.rows)
			ahead := 0.0
			if total > fs.Rows && p.rows > 0 {
				ahead = float64(total-fs.Rows) / float64(p.rows)
			}
			return r.merge(p, ro, ahead)
		})
	if err != nil {
		return err
	}
	r.sum.Rows += fs.Rows
	r.sum.Files = append(r.sum.Files, fs)
	for _, name := range ro.unselected {
		r.unselect(name, fs.Rows)
	}
	return nil
}

// unselect counts n readings of a channel that the selection leaves out.
func (r *reader) unselect(name string, n int64) {
	if r.sum.Unselected == nil {
		r.sum.Unselected = make(map[string]int64)
	}
	if _, ok := r.sum.Unselected[name]; !ok {
		name = strings.Clone(name)
	}
	r.sum.Unselected[name] += n
}

// mapColumns finds the role of each column of a file.
func (r *reader) mapColumns(fields []field) (roles, error) {
	find := func(name string) int {
		for i := range fields {
			if name != "" && fields[i].name == name {
				return i
			}
		}
		return -1
	}
	o := r.opt
	ro := roles{site: find(o.SiteCol), time: find(o.TimeCol), channel: find(o.ChannelCol),
		value: find(o.ValueCol), lat: find(o.LatCol), lon: find(o.LonCol)}
	for _, c := range []struct {
		name string
		i    int
	}{{o.SiteCol, ro.site}, {o.TimeCol, ro.time}} {
		if c.i < 0 {
			return ro, missingColumn(c.name, fields)
		}
	}
	if (ro.lat < 0) != (ro.lon < 0) {
		have, lack := o.LatCol, o.LonCol
		if ro.lat < 0 {
			have, lack = lack, have
		}
		return ro, colErr(have, "position column without its partner %q", lack)
	}
	layout := "wide"
	if ro.channel >= 0 && ro.value >= 0 {
		layout = "long"
	}
	if r.layout != "" && layout != r.layout {
		return ro, fmt.Errorf("%s layout, but the files before are %s", layout, r.layout)
	}
	r.layout = layout
	if layout == "long" {
		return ro, nil
	}
	ro.channel, ro.value = -1, -1
	for i := range fields {
		f := &fields[i]
		switch {
		case i == ro.site || i == ro.time || i == ro.lat || i == ro.lon:
		case r.selected != nil && !r.selected[f.name]:
			if f.numeric() {
				r.present[f.name] = true // for the message of a selected channel never met
				ro.unselected = append(ro.unselected, f.name)
			}
		case f.name == "":
			r.skip(fmt.Sprintf("(unnamed column %d)", i+1))
		case !f.numeric():
			if r.selected != nil {
				return ro, wrongType(&column{field: f}, "readings (want integers or floats)")
			}
			r.skip(f.name)
		default:
			ro.channels = append(ro.channels, i)
			r.present[f.name] = true
		}
	}
	return ro, nil
}

func missingColumn(name string, fields []field) error {
	names := make([]string, len(fields))
	for i, f := range fields {
		names[i] = f.name
	}
	return colErr(name, "no such column (the file has %s)", quoteList(names))
}

// quoteList quotes names and joins them with commas.
func quoteList(names []string) string {
	q := make([]string, len(names))
	for i, n := range names {
		q[i] = strconv.Quote(n)
	}
	return strings.Join(q, ", ")
}

// skip lists a column in Summary.SkippedColumns once.
func (r *reader) skip(name string) {
	r.wide[name] = wideSkipped
	if !slices.Contains(r.sum.SkippedColumns, name) {
		r.sum.SkippedColumns = append(r.sum.SkippedColumns, name)
	}
}

// checkPosition checks a latitude and a longitude in degrees. swapHint
// says the longitudes would fit as latitudes: a latitude beyond ±90 is then
// reported as a sign of swapped columns.
func checkPosition(lat, lon float64, latName, lonName string, swapHint bool) error {
	switch {
	case math.IsNaN(lat):
		return fmt.Errorf("latitude NaN (column %q) is not a number", latName)
	case math.IsNaN(lon):
		return fmt.Errorf("longitude NaN (column %q) is not a number", lonName)
	case !(lat >= -90 && lat <= 90) && swapHint:
		return fmt.Errorf("latitude %g is outside [-90, 90] while the longitudes lie within [-90, 90]: the columns %q and %q look swapped", lat, latName, lonName)
	case !(lat >= -90 && lat <= 90):
		return fmt.Errorf("latitude %g (column %q) is outside [-90, 90]", lat, latName)
	case !(lon >= -180 && lon <= 180):
		return fmt.Errorf("longitude %g (column %q) is outside [-180, 180]", lon, lonName)
	}
	return nil
}

func (r *reader) siteIndex(id string) int32 {
	if i, ok := r.siteIdx[id]; ok {
		return i
	}
	id = strings.Clone(id)
	i := int32(len(r.sites))
	r.siteIdx[id] = i
	r.sites = append(r.sites, &siteAcc{id: id})
	return i
}

// channelIndex returns the index of a channel, -1 when it is not selected.
func (r *reader) channelIndex(name string) int32 {
	if i, ok := r.chanIdx[name]; ok {
		return i
	}
	if r.selected != nil && !r.selected[name] {
		if !r.present[name] {
			r.present[strings.Clone(name)] = true // for the message of a selected channel never met
		}
		return -1
	}
	name = strings.Clone(name)
	i := int32(len(r.channels))
	r.chanIdx[name] = i
	r.channels = append(r.channels, name)
	return i
}

// fitTable sizes the series table for the sites and channels met so far.
func (r *reader) fitTable() {
	if len(r.channels) > r.stride {
		stride := max(16, 2*len(r.channels))
		table := make([]int32, len(r.sites)*stride)
		for id, s := range r.seriesSite {
			table[int(s)*stride+int(r.seriesChan[id])] = int32(id) + 1
		}
		r.table, r.stride = table, stride
	}
	if n := len(r.sites) * r.stride; n > len(r.table) {
		r.table = append(r.table, make([]int32, n-len(r.table))...)
	}
}

func (r *reader) newSeries(s, ch int32) int32 {
	id := int32(len(r.seriesSite))
	r.seriesSite = append(r.seriesSite, s)
	r.seriesChan = append(r.seriesChan, ch)
	r.table[int(s)*r.stride+int(ch)] = id + 1
	r.kept.newSeries()
	return id
}

func (r *reader) finish() (*Dataset, error) {
	for _, ch := range r.opt.Channels {
		if _, ok := r.chanIdx[ch]; !ok && !r.present[ch] {
			if r.opt.Absent {
				r.sum.Absent = append(r.sum.Absent, ch)
				continue
			}
			met := slices.Concat(slices.Collect(maps.Keys(r.present)), r.channels)
			slices.Sort(met)
			files := make([]string, len(r.sum.Files))
			for i, f := range r.sum.Files {
				files[i] = f.Path
			}
			return nil, &Error{File: strings.Join(files, ", "), Err: fmt.Errorf("selected channel %q is not in the dump, whose channels are %s", ch, quoteList(met))}
		}
	}
	for _, n := range r.pending {
		r.drops[dNullValue] += n // columns of only blank cells
	}
	ds := &Dataset{}
	sum := &r.sum
	sum.Layout = r.layout
	kept := make([]bool, len(r.channels))
	series, lost := r.kept.series(r.opt.Workers)
	for id, d := range lost {
		if d > 0 {
			if sum.SiteDuplicates == nil {
				sum.SiteDuplicates = make(map[string]int64)
			}
			sum.Duplicates += int64(d)
			sum.SiteDuplicates[r.sites[r.seriesSite[id]].id] += int64(d)
		}
	}
	bySite := make([][]int32, len(r.sites))
	for id, s := range r.seriesSite {
		bySite[s] = append(bySite[s], int32(id))
	}
	sites := make([]int, len(r.sites))
	for i := range sites {
		sites[i] = i
	}
	slices.SortFunc(sites, func(a, b int) int { return strings.Compare(r.sites[a].id, r.sites[b].id) })
	start, end := int64(math.MaxInt64), int64(math.MinInt64)
	for _, si := range sites {
		sa := r.sites[si]
		sd := &SiteData{ID: sa.id, Series: make(map[string]Series, len(bySite[si]))}
		for _, id := range bySite[si] {
			ser := series[id]
			if ser.Len() == 0 {
				continue
			}
			sum.Readings += int64(ser.Len())
			if sum.SiteReadings == nil {
				sum.SiteReadings = make(map[string]int64)
			}
			sum.SiteReadings[sa.id] += int64(ser.Len())
			start, end = min(start, ser.Times[0]), max(end, ser.Times[ser.Len()-1])
			ch := r.seriesChan[id]
			kept[ch] = true
			sd.Series[r.channels[ch]] = ser
		}
		if t, pos, _ := order(sa.track.times, sa.track.vals); len(t) > 0 {
			sd.Track = Track{Times: t, Lat: make([]float64, len(pos)), Lon: make([]float64, len(pos))}
			for i, p := range pos {
				sd.Track.Lat[i], sd.Track.Lon[i] = p[0], p[1]
			}
		}
		if len(sd.Series) == 0 && sd.Track.Len() == 0 {
			continue
		}
		if reg := r.opt.Register; reg != nil {
			if sd.Info, _ = reg.Lookup(sd.ID); sd.Info == nil {
				sum.Unregistered = append(sum.Unregistered, sd.ID)
			}
		}
		ds.Sites = append(ds.Sites, sd)
	}
	for ch, name := range r.channels {
		if kept[ch] {
			ds.Channels = append(ds.Channels, name)
		}
	}
	slices.Sort(ds.Channels)
	sum.Channels = ds.Channels
	sum.Sites = len(ds.Sites)
	sum.Dropped = make(map[string]int64)
	for _, sa := range r.sites {
		for d, n := range sa.drops {
			if n == 0 {
				continue
			}
			if sum.SiteDropped[sa.id] == nil {
				if sum.SiteDropped == nil {
					sum.SiteDropped = make(map[string]map[string]int64)
				}
				sum.SiteDropped[sa.id] = make(map[string]int64)
			}
			sum.SiteDropped[sa.id][dropNames[d]] += n
		}
	}
	for i, n := range r.drops {
		if n > 0 {
			sum.Dropped[dropNames[i]] = n
		}
	}
	if r.epochSeen {
		if likely := likelyUnit(r.epochSample); likely != "" && likely != r.opt.TimeUnit {
			sum.EpochUnit = &UnitError{Sample: r.epochSample, Given: r.opt.TimeUnit, Likely: likely}
		}
	}
	if sum.Readings == 0 {
		paths := make([]string, len(sum.Files))
		for i, f := range sum.Files {
			paths[i] = f.Path
		}
		err := fmt.Errorf("no readings in %s (%d rows%s)", strings.Join(paths, ", "), sum.Rows, dropList(sum.Dropped, "; dropped: "))
		if sum.EpochUnit != nil {
			err = fmt.Errorf("%w: %w", err, sum.EpochUnit)
		}
		return nil, &Error{Err: err}
	}
	sum.Start, sum.End = time.Unix(0, start).UTC(), time.Unix(0, end).UTC()
	ds.Summary = *sum
	return ds, nil
}
