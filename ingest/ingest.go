// Package ingest reads sensor dumps (Parquet, Arrow IPC, CSV) and site
// registers into per-site, per-channel time series.
//
// A dump is either long (one row per reading: site, time, channel, value) or
// wide (one row per site and time, one numeric column per channel). The
// layout is long when both the channel and the value column exist, wide
// otherwise. The file format is detected from the content, not the name.
package ingest

import (
	"time"
)

// Options says which columns of a dump mean what. The zero value is not
// useful; start from DefaultOptions.
type Options struct {
	SiteCol    string   // site id column (strings or integers)
	TimeCol    string   // time column
	ChannelCol string   // long layout: channel name column
	ValueCol   string   // long layout: value column
	LatCol     string   // optional position column of mobile sites
	LonCol     string   // optional position column of mobile sites
	Channels   []string // wide layout: keep only these channels (all when empty)
	TimeUnit   string   // unit of integer epoch times: "s", "ms", "us" or "ns"

	// Register, when set, is attached to the result: SiteData.Info is filled
	// and sites missing from it are listed in Summary.Unregistered.
	Register *Register
}

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
	Files          []FileSummary
	Layout         string // "long" or "wide"
	Rows           int64  // rows read from all files
	Readings       int64  // readings kept
	Sites          int
	Channels       []string
	Start, End     time.Time        // earliest and latest reading kept
	Dropped        map[string]int64 // readings dropped, by reason
	Duplicates     int64            // duplicate (site, channel, time) readings resolved
	SkippedColumns []string         // non-numeric extra columns of a wide dump
	NaiveTime      bool             // timestamps without UTC adjustment were read as UTC
	Unregistered   []string         // sites in the dump but not in the register
}

// FileSummary describes one file read.
type FileSummary struct {
	Path   string
	Format string // "parquet", "arrow-file", "arrow-stream", "csv"
	Rows   int64
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

// RegisterOptions says which columns of a register mean what.
type RegisterOptions struct {
	Key    string // site id column
	LatCol string
	LonCol string
}
