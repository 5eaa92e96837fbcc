package scaleout

import (
	"bytes"
	"cmp"
	"context"
	"encoding/gob"
	"encoding/json"
	"errors"
	"fmt"
	"hash/fnv"
	"io/fs"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"time"

	"github.com/kinmap/kinmap"
	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/ingest"
)

// fileRef is one dump: its place among the inputs, which decides which of
// two readings of the same site, channel and time wins, and its path.
type fileRef struct {
	Index int
	Path  string
}

// fileOutcome is what reading one dump gave: its summary (gob-encoded
// ingest.Summary) and channels, or the message of its error.
type fileOutcome struct {
	Index    int
	Summary  []byte
	Channels []string
	Err      string
	Usage    bool // Err is a usage error
}

// siteChunk is what one dump holds about one site.
type siteChunk struct {
	File       int
	Channels   []string
	Times      [][]int64 // by channel, as ingest.Series.Times
	Values     [][]float64
	TrackTimes []int64
	Lat, Lon   []float64
}

// windowRec is one window of features.Table with its bounds as Unix
// nanoseconds, for Beam's coders.
type windowRec struct {
	Start, End int64
	Lat, Lon   float64
	Located    bool
	Values     []float64
}

// siteResult is the outcome of one site: its windows and skipped windows,
// the readings kept and the duplicates resolved across dumps.
type siteResult struct {
	Site        string
	Readings    int64
	Duplicates  int64 // between dumps; those within one are in its summary
	Registered  bool
	Windows     []windowRec
	SkipReasons []string
	SkipCounts  []int
	Unused      int64           // features.Table.Unused of the site
	Steps       []time.Duration // features.Table.Steps of the site
	PathTimes   []int64         // features.Table.Paths as Unix nanoseconds and degrees
	PathLat     []float64
	PathLon     []float64
	Err         string
}

// expand resolves the dump paths and patterns as ingest.Read does, in the
// order given, matches of a pattern sorted. Remote paths (gs://, s3://...)
// are listed through Beam's file systems.
func expand(ctx context.Context, paths []string) ([]string, error) {
	var files []string
	for _, p := range paths {
		glob := strings.ContainsAny(p, `*?[\`)
		var matches []string
		switch {
		case remote(p) && glob:
			var err error
			if matches, err = list(ctx, p); err != nil {
				return nil, err
			}
		case remote(p):
			matches = []string{p}
		case glob:
			var err error
			if matches, err = filepath.Glob(p); err != nil {
				return nil, usage("ingest: bad pattern %q: %v", p, err)
			}
			slices.Sort(matches)
		default:
			st, err := os.Stat(p)
			switch {
			case errors.Is(err, fs.ErrNotExist):
				return nil, usage("ingest: %s: no such file", p)
			case err != nil:
				return nil, fmt.Errorf("ingest: %s: %w", p, err)
			case st.IsDir():
				return nil, usage("ingest: %s: is a directory", p)
			}
			matches = []string{p}
		}
		if len(matches) == 0 {
			return nil, usage("ingest: pattern %q matches no file", p)
		}
		files = append(files, matches...)
	}
	return files, nil
}

func usage(format string, a ...any) error { return &kinmap.UsageError{Err: fmt.Errorf(format, a...)} }

// readFn reads one dump with the project's reader and emits what it holds
// about each site, keyed by site, and the outcome of the file.
type readFn struct {
	// Ingest is the JSON of the ingest.Options, without a register (sites
	// are looked up once merged): Beam cannot encode the register's
	// attribute values as a field.
	Ingest []byte

	opt ingest.Options
}

func (f *readFn) Setup() error { return json.Unmarshal(f.Ingest, &f.opt) }

func (f *readFn) ProcessElement(ctx context.Context, ref fileRef, emitSite func(string, siteChunk), emitFile func(fileOutcome)) error {
	local, done, err := localCopy(ctx, ref.Path)
	if err != nil {
		return err // an I/O problem, worth a retry
	}
	defer done()
	ds, err := ingest.Read([]string{local}, f.opt)
	if err = asRemote(err, local, ref.Path); err != nil {
		emitFile(fileOutcome{Index: ref.Index, Err: err.Error(), Usage: errors.Is(err, ingest.ErrUsage)})
		return nil
	}
	sum := ds.Summary
	sum.Files[0].Path = ref.Path
	var buf bytes.Buffer
	if err := gob.NewEncoder(&buf).Encode(sum); err != nil {
		return err
	}
	emitFile(fileOutcome{Index: ref.Index, Summary: buf.Bytes(), Channels: ds.Channels})
	for _, sd := range ds.Sites {
		c := siteChunk{File: ref.Index, TrackTimes: sd.Track.Times, Lat: sd.Track.Lat, Lon: sd.Track.Lon}
		for _, ch := range ds.Channels {
			if s, ok := sd.Series[ch]; ok {
				c.Channels = append(c.Channels, ch)
				c.Times = append(c.Times, s.Times)
				c.Values = append(c.Values, s.Values)
			}
		}
		emitSite(sd.ID, c)
	}
	return nil
}

// channelsFn combines the outcomes of the dumps into the sorted union of
// their channels: the channel list of the whole dataset, which decides the
// feature names of every site.
type channelsFn struct{}

func (channelsFn) CreateAccumulator() []string { return nil }

func (channelsFn) AddInput(acc []string, o fileOutcome) []string {
	return union(acc, o.Channels)
}

func (channelsFn) MergeAccumulators(a, b []string) []string { return union(a, b) }

func (channelsFn) ExtractOutput(acc []string) []string { return acc }

// union merges two sorted lists of names into a new one.
func union(a, b []string) []string {
	out := slices.Concat(a, b)
	slices.Sort(out)
	return slices.Compact(out)
}

// siteFn merges what the dumps hold about one site, cuts it into windows
// with features.Extract on a one-site dataset of the whole dataset's
// channels, exactly as a local run cuts it, and emits the result keyed by
// its window shard.
type siteFn struct {
	Features features.Config
	Register string // register file, "" for none
	RegOpts  ingest.RegisterOptions
	Shards   int

	reg *ingest.Register
}

func (f *siteFn) Setup(ctx context.Context) error {
	if f.Register == "" {
		return nil
	}
	local, done, err := localCopy(ctx, f.Register)
	if err != nil {
		return err
	}
	defer done()
	f.reg, err = ingest.ReadRegister(local, f.RegOpts)
	return asRemote(err, local, f.Register)
}

func (f *siteFn) ProcessElement(site string, chunks func(*siteChunk) bool, channels []string, emit func(int, siteResult)) {
	sd, dups := mergeSite(site, collect(chunks))
	res := siteResult{Site: site, Duplicates: dups}
	for _, s := range sd.Series {
		res.Readings += int64(s.Len())
	}
	sd.Info, res.Registered = f.reg.Lookup(site)
	cfg := f.Features
	cfg.Workers = 1 // sites are spread over the workers by the runner
	t, err := features.Extract(&ingest.Dataset{Channels: channels, Sites: []*ingest.SiteData{sd}}, cfg)
	if err != nil {
		res.Err = err.Error()
	} else {
		res.Windows = make([]windowRec, len(t.Windows))
		for i, w := range t.Windows {
			res.Windows[i] = windowRec{Start: w.Start.UnixNano(), End: w.End.UnixNano(), Lat: w.Lat, Lon: w.Lon, Located: w.Located, Values: w.Values}
		}
		for _, f := range t.Paths[site] {
			res.PathTimes = append(res.PathTimes, f.Time.UnixNano())
			res.PathLat, res.PathLon = append(res.PathLat, f.Lat), append(res.PathLon, f.Lon)
		}
		res.Unused, res.Steps = t.Unused[site], t.Steps
		for _, reason := range sortedKeys(t.Skipped[site]) {
			res.SkipReasons = append(res.SkipReasons, reason)
			res.SkipCounts = append(res.SkipCounts, t.Skipped[site][reason])
		}
	}
	emit(shardOf(site, f.Shards), res)
}

// collect gathers the values of a Beam iterator, each decoded afresh.
func collect[T any](next func(*T) bool) []T {
	var all []T
	for {
		var v T
		if !next(&v) {
			return all
		}
		all = append(all, v)
	}
}

// shardOf spreads the sites over the window shards.
func shardOf(site string, shards int) int {
	h := fnv.New32a()
	h.Write([]byte(site))
	return int(h.Sum32() % uint32(shards))
}

func sortedKeys[V any](m map[string]V) []string {
	keys := make([]string, 0, len(m))
	for k := range m {
		keys = append(keys, k)
	}
	slices.Sort(keys)
	return keys
}

// mergeSite joins the chunks of one site the way ingest.Read joins the
// readings of several files: of several readings of a channel at the same
// instant the one of the later file wins, and so for positions. It returns
// the site and the number of readings so replaced.
func mergeSite(site string, cs []siteChunk) (*ingest.SiteData, int64) {
	slices.SortFunc(cs, func(a, b siteChunk) int { return cmp.Compare(a.File, b.File) })
	sd := &ingest.SiteData{ID: site, Series: map[string]ingest.Series{}}
	type part struct {
		times []int64
		vals  []float64
	}
	byChannel := map[string][]part{}
	var track []part
	var lat, lon [][]float64
	for _, c := range cs {
		for i, ch := range c.Channels {
			byChannel[ch] = append(byChannel[ch], part{c.Times[i], c.Values[i]})
		}
		if len(c.TrackTimes) > 0 {
			track = append(track, part{times: c.TrackTimes})
			lat, lon = append(lat, c.Lat), append(lon, c.Lon)
		}
	}
	var dups int64
	for ch, parts := range byChannel {
		idx := lastWins(len(parts), func(p int) []int64 { return parts[p].times })
		s := ingest.Series{Times: make([]int64, len(idx)), Values: make([]float64, len(idx))}
		for i, at := range idx {
			s.Times[i], s.Values[i] = parts[at[0]].times[at[1]], parts[at[0]].vals[at[1]]
		}
		for _, p := range parts {
			dups += int64(len(p.times))
		}
		dups -= int64(len(idx))
		sd.Series[ch] = s
	}
	if len(track) > 0 {
		idx := lastWins(len(track), func(p int) []int64 { return track[p].times })
		sd.Track = ingest.Track{Times: make([]int64, len(idx)), Lat: make([]float64, len(idx)), Lon: make([]float64, len(idx))}
		for i, at := range idx {
			sd.Track.Times[i], sd.Track.Lat[i], sd.Track.Lon[i] = track[at[0]].times[at[1]], lat[at[0]][at[1]], lon[at[0]][at[1]]
		}
	}
	return sd, dups
}

// lastWins merges n strictly increasing time lists, taken in order, into
// one: it returns for every distinct instant the (list, position) of its
// last occurrence.
func lastWins(n int, times func(p int) []int64) [][2]int {
	if n == 1 {
		t := times(0)
		out := make([][2]int, len(t))
		for i := range t {
			out[i] = [2]int{0, i}
		}
		return out
	}
	var all [][2]int
	for p := range n {
		for i := range times(p) {
			all = append(all, [2]int{p, i})
		}
	}
	at := func(e [2]int) int64 { return times(e[0])[e[1]] }
	// Stable, so that equal instants stay in file order and the last wins.
	slices.SortStableFunc(all, func(a, b [2]int) int { return cmp.Compare(at(a), at(b)) })
	out := all[:0]
	for _, e := range all {
		if len(out) > 0 && at(out[len(out)-1]) == at(e) {
			out[len(out)-1] = e
			continue
		}
		out = append(out, e)
	}
	return out
}

// shardFn writes the results of the sites of one window shard, sorted by
// site, into the run's scratch folder.
type shardFn struct {
	Dir string
}

func (f *shardFn) ProcessElement(ctx context.Context, shard int, results func(*siteResult) bool) error {
	rs := collect(results)
	slices.SortFunc(rs, func(a, b siteResult) int { return strings.Compare(a.Site, b.Site) })
	return writeGob(ctx, join(f.Dir, windowsDir, fmt.Sprintf(shardName, shard)), rs)
}

// outcomesFn writes the outcomes of all dumps, in input order.
type outcomesFn struct {
	Dir string
}

func (f *outcomesFn) ProcessElement(ctx context.Context, _ int, outcomes func(*fileOutcome) bool) error {
	all := collect(outcomes)
	slices.SortFunc(all, func(a, b fileOutcome) int { return cmp.Compare(a.Index, b.Index) })
	return writeGob(ctx, join(f.Dir, inputsFile), all)
}

// mergeSummary builds the summary a local read of all the dumps gives from
// the summaries of the single dumps and the merged sites (sorted by site).
func mergeSummary(outcomes []fileOutcome, sites []siteResult, reg *ingest.Register) (ingest.Summary, error) {
	sum := ingest.Summary{Dropped: map[string]int64{}}
	for _, o := range outcomes {
		var s ingest.Summary
		if err := gob.NewDecoder(bytes.NewReader(o.Summary)).Decode(&s); err != nil {
			return sum, fmt.Errorf("scaleout: summary of dump %d: %w", o.Index, err)
		}
		if sum.Layout != "" && s.Layout != sum.Layout {
			return sum, fmt.Errorf("ingest: %s: %s layout, but the files before are %s", s.Files[0].Path, s.Layout, sum.Layout)
		}
		sum.Layout = s.Layout
		sum.Files = append(sum.Files, s.Files...)
		sum.Rows += s.Rows
		sum.Duplicates += s.Duplicates
		for site, n := range s.SiteDuplicates {
			addTo(&sum.SiteDuplicates, site, n)
		}
		for site, drops := range s.SiteDropped {
			if sum.SiteDropped == nil {
				sum.SiteDropped = map[string]map[string]int64{}
			}
			if sum.SiteDropped[site] == nil {
				sum.SiteDropped[site] = map[string]int64{}
			}
			for r, n := range drops {
				sum.SiteDropped[site][r] += n
			}
		}
		sum.NaiveTime = sum.NaiveTime || s.NaiveTime
		for r, n := range s.Dropped {
			sum.Dropped[r] += n
		}
		for _, c := range s.SkippedColumns {
			if !slices.Contains(sum.SkippedColumns, c) {
				sum.SkippedColumns = append(sum.SkippedColumns, c)
			}
		}
		sum.Channels = union(sum.Channels, s.Channels)
		for ch, n := range s.Unselected {
			if sum.Unselected == nil {
				sum.Unselected = map[string]int64{}
			}
			sum.Unselected[ch] += n
		}
		// A channel is absent from the dataset when no dump holds it; the
		// first dump to give a channel a unit gives it, as in a local read.
		if o.Index == outcomes[0].Index {
			sum.Absent = slices.Clone(s.Absent)
		} else {
			sum.Absent = slices.DeleteFunc(sum.Absent, func(ch string) bool { return !slices.Contains(s.Absent, ch) })
		}
		for ch, u := range s.Units {
			if _, ok := sum.Units[ch]; !ok {
				if sum.Units == nil {
					sum.Units = map[string]string{}
				}
				sum.Units[ch] = u
			}
		}
		if sum.EpochUnit == nil {
			sum.EpochUnit = s.EpochUnit
		}
		if sum.Start.IsZero() || s.Start.Before(sum.Start) {
			sum.Start = s.Start
		}
		if s.End.After(sum.End) {
			sum.End = s.End
		}
	}
	for _, s := range sites {
		sum.Readings += s.Readings
		sum.Duplicates += s.Duplicates
		addTo(&sum.SiteReadings, s.Site, s.Readings)
		addTo(&sum.SiteDuplicates, s.Site, s.Duplicates)
		if reg != nil && !s.Registered {
			sum.Unregistered = append(sum.Unregistered, s.Site)
		}
	}
	sum.Sites = len(sites)
	return sum, nil
}

// addTo adds n to the count of key in *m, making the map when n is the
// first non-zero count, as a local read leaves it nil without one.
func addTo(m *map[string]int64, key string, n int64) {
	if n == 0 {
		return
	}
	if *m == nil {
		*m = map[string]int64{}
	}
	(*m)[key] += n
}

// table assembles the feature table of the sites (sorted by site), as
// features.Extract makes it for the whole dataset.
func table(names []string, cfg features.Config, sites []siteResult) *features.Table {
	t := &features.Table{Names: names, Config: cfg, Skipped: map[string]features.Skips{}}
	for _, s := range sites {
		t.Steps = append(t.Steps, s.Steps...)
		if s.Unused > 0 {
			if t.Unused == nil {
				t.Unused = map[string]int64{}
			}
			t.Unused[s.Site] = s.Unused
		}
		for _, w := range s.Windows {
			t.Windows = append(t.Windows, features.Window{
				Site: s.Site, Start: time.Unix(0, w.Start).UTC(), End: time.Unix(0, w.End).UTC(),
				Lat: w.Lat, Lon: w.Lon, Located: w.Located, Values: w.Values,
			})
		}
		if len(s.SkipReasons) > 0 {
			sk := features.Skips{}
			for i, r := range s.SkipReasons {
				sk[r] = s.SkipCounts[i]
			}
			t.Skipped[s.Site] = sk
		}
		if len(s.PathTimes) > 0 {
			if t.Paths == nil {
				t.Paths = map[string][]features.Fix{}
			}
			path := make([]features.Fix, len(s.PathTimes))
			for i, ns := range s.PathTimes {
				path[i] = features.Fix{Time: time.Unix(0, ns).UTC(), Lat: s.PathLat[i], Lon: s.PathLon[i]}
			}
			t.Paths[s.Site] = path
		}
	}
	slices.Sort(t.Steps)
	t.Step = features.MedianStep(t.Steps)
	return t
}
