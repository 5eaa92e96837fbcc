// Package ingest reads sensor dumps (Parquet, Arrow IPC, CSV) and site
// registers into per-site, per-channel time series.
//
// A dump is either long (one row per reading: site, time, channel, value) or
// wide (one row per site and time, one numeric column per channel). The
// layout is long when both the channel and the value column exist, wide
// otherwise. The file format is detected from the content, not the name.
package ingest

import (
	"slices"
	"time"
)

// Options says which columns of a dump mean what. The zero value is not
// useful; start from DefaultOptions.
type Options struct {
	SiteCol    string   `json:"site_col"`           // site id column (strings or integers)
	TimeCol    string   `json:"time_col"`           // time column
	ChannelCol string   `json:"channel_col"`        // long layout: channel name column
	ValueCol   string   `json:"value_col"`          // long layout: value column
	LatCol     string   `json:"lat_col"`            // optional position column of mobile sites
	LonCol     string   `json:"lon_col"`            // optional position column of mobile sites
	Channels   []string `json:"channels,omitempty"` // keep only these channels (all when empty)
	TimeUnit   string   `json:"time_unit"`          // unit of integer epoch times: "s", "ms", "us" or "ns"
	Workers    int      `json:"-"`                  // parallelism; 0 means all cores (at most 4 per file)

	// Absent, when set, lets channels of Channels be absent from the dump:
	// they are listed in Summary.Absent instead of refused. It serves a
	// caller that selects a model's channels, not the user's list.
	Absent bool `json:"-"`

	// Register, when set, is attached to the result: SiteData.Info is filled
	// and sites missing from it are listed in Summary.Unregistered.
	Register *Register `json:"-"`
}

// Validate reports a usage problem in the options: an empty site or time
// column name, an unknown time unit, one name given to two roles, a lat
// column without a lon column or the reverse, an empty or repeated channel
// name. The error matches ErrUsage. ChannelCol, ValueCol, LatCol and LonCol
// may be empty: no such column.
func (o Options) Validate() error {
	if o.SiteCol == "" {
		return usagef("the site column name is empty")
	}
	if o.TimeCol == "" {
		return usagef("the time column name is empty")
	}
	if _, ok := unitNanos(o.TimeUnit); !ok {
		return usagef("unknown time unit %q (want s, ms, us or ns)", o.TimeUnit)
	}
	if (o.LatCol == "") != (o.LonCol == "") {
		return usagef("give both a lat and a lon column name, or neither (lat %q, lon %q)", o.LatCol, o.LonCol)
	}
	roles := []struct{ role, name string }{
		{"site", o.SiteCol}, {"time", o.TimeCol}, {"channel", o.ChannelCol},
		{"value", o.ValueCol}, {"lat", o.LatCol}, {"lon", o.LonCol},
	}
	for i, a := range roles {
		for _, b := range roles[i+1:] {
			if a.name != "" && a.name == b.name {
				return usagef("column %q is named as both the %s and the %s column", a.name, a.role, b.role)
			}
		}
	}
	for i, ch := range o.Channels {
		if ch == "" {
			return usagef("empty channel name in the channel list")
		}
		if slices.Contains(o.Channels[:i], ch) {
			return usagef("channel %q is listed twice", ch)
		}
		for _, r := range roles {
			if r.role != "channel" && r.role != "value" && ch == r.name {
				return usagef("channel %q is the %s column", ch, r.role)
			}
		}
	}
	return nil
}

// unitNanos gives the length in nanoseconds of an Options.TimeUnit.
func unitNanos(unit string) (int64, bool) {
	switch unit {
	case "s":
		return 1e9, true
	case "ms":
		return 1e6, true
	case "us":
		return 1e3, true
	case "ns":
		return 1, true
	}
	return 0, false
}

// Reasons for dropping, the keys of Summary.Dropped. The first four count
// rows (every reading of the row is lost), the others single readings.
const (
	DropNullSite    = "null site"
	DropNullTime    = "null time"
	DropTimeRange   = "time out of range"
	DropNullChannel = "null channel"
	DropNullValue   = "null value"
	DropNaN         = "NaN value"
	DropInf         = "infinite value"
	DropSentinel    = "sentinel value"
)

// SentinelMagnitude is the magnitude from which a finite reading is taken
// for a sentinel, not a measurement, and dropped (DropSentinel): historians
// and loggers mark bad-quality or missing readings with the largest float64
// (±1.797e308), the largest float32 (±3.4e38) or ±1e30 (common practice, no
// source). No quantity a sensor reports in any unit comes near it, and
// squares of smaller values stay finite, so one marked reading cannot turn
// a window's statistics into infinities.
const SentinelMagnitude = 1e30

// DefaultOptions returns the column names the command uses by default.
func DefaultOptions() Options {
	return Options{
		SiteCol:    "site",
		TimeCol:    "time",
		ChannelCol: "channel",
		ValueCol:   "value",
		LatCol:     "lat",
		LonCol:     "lon",
		TimeUnit:   "s",
	}
}

// Series is one channel of one site: readings sorted by time, at most one per
// instant.
type Series struct {
	Times  []int64 // Unix nanoseconds, UTC, strictly increasing
	Values []float64
}

// Len reports the number of readings.
func (s Series) Len() int { return len(s.Times) }

// Track holds the positions a mobile site reported, sorted by time, at most
// one per instant.
type Track struct {
	Times []int64 // Unix nanoseconds, UTC, strictly increasing
	Lat   []float64
	Lon   []float64
}

// Len reports the number of positions.
func (t Track) Len() int { return len(t.Times) }

// SiteData is everything a dump holds about one site.
type SiteData struct {
	ID     string
	Info   *Site             // register entry, nil when the site is not registered
	Series map[string]Series // by channel name
	Track  Track             // positions from the dump itself (mobile sites)
}

// Dataset is the result of reading one or more dump files.
type Dataset struct {
	Channels []string    // sorted channel names
	Sites    []*SiteData // sorted by ID
	Summary  Summary
}

// Summary says what was read and what was dropped.
type Summary struct {
	Files      []FileSummary
	Layout     string // "long" or "wide"
	Rows       int64  // rows read from all files
	Readings   int64  // readings kept
	Sites      int
	Channels   []string
	Start, End time.Time        // earliest and latest reading kept
	Dropped    map[string]int64 // readings dropped, by reason
	// SiteDropped counts the drops of Dropped that have a site, by site,
	// then reason: every reason but DropNullSite, and but the blank cells
	// of a wide CSV column that no earlier batch showed to be numeric.
	SiteDropped map[string]map[string]int64 `json:",omitempty"`
	// EpochUnit is set when integer epoch times look like another unit
	// than Options.TimeUnit.
	EpochUnit      *UnitError `json:",omitempty"`
	Duplicates     int64      // duplicate (site, channel, time) readings resolved
	SkippedColumns []string   // non-numeric extra columns of a wide dump
	NaiveTime      bool       // timestamps without UTC adjustment were read as UTC
	Unregistered   []string   // sites in the dump but not in the register
	Absent         []string   // channels of Options.Channels absent from the dump (Options.Absent)
	// Unselected counts, by channel, the readings of the dump's channels
	// that Options.Channels leaves out and that are not read: rows of a
	// long dump, cells of a wide dump's numeric column (blank ones too).
	Unselected map[string]int64 `json:",omitempty"`
	// SiteDuplicates counts the duplicates of Duplicates by site, and
	// SiteReadings the readings kept by site.
	SiteDuplicates map[string]int64
	SiteReadings   map[string]int64
	// Units are the units of a wide dump's channels that the field
	// metadata of its Parquet or Arrow columns gives (unitKey), by channel.
	Units map[string]string `json:",omitempty"`
}

// FileSummary describes one file read.
type FileSummary struct {
	Path   string `json:"path"`
	Format string `json:"format"` // "parquet", "arrow-file", "arrow-stream", "csv"
	Rows   int64  `json:"rows"`
}

// Site is one entry of a site register.
type Site struct {
	ID      string
	Lat     float64
	Lon     float64
	Located bool   // Lat and Lon are known
	Attrs   []Attr // every other column of the register, in register order
}

// Attr is one attribute of a registered site. Value is nil, string, int64,
// float64 or bool.
type Attr struct {
	Name  string
	Value any
}

// Register is a site register: positions and attributes by site id.
type Register struct {
	Key       string   // the id column
	AttrNames []string // attribute columns, in file order
	Sites     []*Site  // sorted by ID
	index     map[string]*Site
}

// Lookup returns the register entry of a site.
func (r *Register) Lookup(id string) (*Site, bool) {
	if r == nil {
		return nil, false
	}
	s, ok := r.index[id]
	return s, ok
}

// RegisterOptions says which columns of a register mean what. Empty names
// stand for the defaults of DefaultRegisterOptions.
type RegisterOptions struct {
	Key    string `json:"key"`     // site id column (GeoJSON: property, else the feature id)
	LatCol string `json:"lat_col"` // ignored for GeoJSON, where the Point geometry gives the position
	LonCol string `json:"lon_col"`
}

// DefaultRegisterOptions returns the register column names the command uses
// by default: the default site, lat and lon columns of DefaultOptions.
func DefaultRegisterOptions() RegisterOptions {
	o := DefaultOptions()
	return RegisterOptions{Key: o.SiteCol, LatCol: o.LatCol, LonCol: o.LonCol}
}
