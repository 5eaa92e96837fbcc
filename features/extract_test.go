package features

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"strings"
	"testing"
	"time"

	"github.com/kinmap/kinmap/ingest"
	"github.com/paulmach/orb"
	"github.com/paulmach/orb/geo"
)

func site(id string, series map[string]ingest.Series) *ingest.SiteData {
	return &ingest.SiteData{ID: id, Series: series}
}

// Daily windows in Europe/Berlin follow local midnight across both changes
// of 2024. The EU rule (Directive 2000/84/EC, Articles 2 and 3) moves the
// clocks at 01:00 UTC on the last Sunday of March and of October, so
// 31 March lasts 23 h from 23:00 UTC the day before, and 27 October lasts
// 25 h from 22:00 UTC the day before. A daily cycle on the local clock keeps
// its peak hour on both days (the fit uses the zone's clock).
func TestWindowsAcrossDST(t *testing.T) {
	berlin := mustZone(t, "Europe/Berlin")
	localCycle := func(ti time.Time) float64 {
		l := ti.In(berlin)
		h := float64(l.Hour()) + float64(l.Minute())/60
		return 3 * math.Cos(2*math.Pi*(h-14)/24)
	}
	tests := []struct {
		from       string
		wantStarts []string
		wantHours  []float64
	}{
		{"2024-03-29T23:00:00Z", []string{"2024-03-29T23:00:00Z", "2024-03-30T23:00:00Z", "2024-03-31T22:00:00Z"}, []float64{24, 23, 24}},
		{"2024-10-25T22:00:00Z", []string{"2024-10-25T22:00:00Z", "2024-10-26T22:00:00Z", "2024-10-27T23:00:00Z"}, []float64{24, 25, 24}},
	}
	for _, tt := range tests {
		from, _ := time.Parse(time.RFC3339, tt.from)
		var hours float64
		for _, h := range tt.wantHours {
			hours += h
		}
		s := regular(from, 10*time.Minute, int(6*hours), localCycle)
		tab, err := Extract(dataset(site("m", map[string]ingest.Series{"v": s})),
			Config{Window: 24 * time.Hour, TZ: "Europe/Berlin", MinCoverage: 0.9, Features: "count,day_phase,day_amp"})
		if err != nil {
			t.Fatal(err)
		}
		if len(tab.Windows) != len(tt.wantStarts) {
			t.Fatalf("from %s: %d windows, want %d (skipped %v)", tt.from, len(tab.Windows), len(tt.wantStarts), tab.Skipped)
		}
		for i, w := range tab.Windows {
			if got := w.Start.Format(time.RFC3339); got != tt.wantStarts[i] {
				t.Errorf("window %d starts %s, want %s", i, got, tt.wantStarts[i])
			}
			if got := w.End.Sub(w.Start).Hours(); got != tt.wantHours[i] {
				t.Errorf("window %d lasts %v h, want %v", i, got, tt.wantHours[i])
			}
			if got := value(t, tab, w, "v.count"); got != 6*tt.wantHours[i] {
				t.Errorf("window %d holds %v readings, want %v", i, got, 6*tt.wantHours[i])
			}
			if got := value(t, tab, w, "v.day_phase"); math.Abs(got-14) > 1e-9 {
				t.Errorf("window %d peaks at %v h local, want 14", i, got)
			}
			if got := value(t, tab, w, "v.day_amp"); math.Abs(got-3) > 1e-9 {
				t.Errorf("window %d amplitude %v, want 3", i, got)
			}
		}
	}
}

// In a zone whose clocks jump forward at midnight the day starts at the
// first instant after the jump: Brazil's summer time of 2018 began at
// 00:00 on 4 November, clocks going to 01:00 (from memory), so that day
// ran from 03:00 UTC (01:00 −02) to 02:00 UTC on the 5th (midnight −02).
func TestWindowStartsAfterMidnightGap(t *testing.T) {
	from := time.Date(2018, 11, 3, 12, 0, 0, 0, time.UTC)
	s := regular(from, time.Hour, 48, func(time.Time) float64 { return 1 })
	tab, err := Extract(dataset(site("m", map[string]ingest.Series{"v": s})),
		Config{Window: 24 * time.Hour, TZ: "America/Sao_Paulo", Features: "count"})
	if err != nil {
		t.Fatal(err)
	}
	var found bool
	for _, w := range tab.Windows {
		if w.Start.Equal(time.Date(2018, 11, 4, 3, 0, 0, 0, time.UTC)) {
			found = true
			if want := time.Date(2018, 11, 5, 2, 0, 0, 0, time.UTC); !w.End.Equal(want) {
				t.Errorf("4 November ends %v, want %v", w.End, want)
			}
		}
	}
	if !found {
		t.Errorf("no window starting 2018-11-04T03:00Z among %v", tab.Windows)
	}
}

// clock.instant must be the first instant whose wall clock reads w or
// later, checked by a minute-by-minute scan with the time package's zone
// lookup, on dates around clock changes of several zones.
func TestInstantIsFirstWallAtOrAfter(t *testing.T) {
	cases := []struct {
		zone string
		day  time.Time
	}{
		{"Europe/Berlin", time.Date(2024, 3, 31, 0, 0, 0, 0, time.UTC)},
		{"Europe/Berlin", time.Date(2024, 10, 27, 0, 0, 0, 0, time.UTC)},
		{"America/Sao_Paulo", time.Date(2018, 11, 4, 0, 0, 0, 0, time.UTC)},
		{"America/Sao_Paulo", time.Date(2019, 2, 16, 0, 0, 0, 0, time.UTC)},
		{"Australia/Lord_Howe", time.Date(2024, 4, 7, 0, 0, 0, 0, time.UTC)},
		{"Pacific/Apia", time.Date(2011, 12, 30, 0, 0, 0, 0, time.UTC)},
		{"Asia/Kolkata", time.Date(2024, 1, 1, 0, 0, 0, 0, time.UTC)},
	}
	for _, c := range cases {
		clk := clock{loc: mustZone(t, c.zone)}
		for m := -30 * 60; m <= 30*60; m += 30 {
			// These zones change their clocks on whole minutes by whole
			// minutes, so a scan by minutes finds the exact first instant.
			w := c.day.UnixNano() + int64(m)*int64(time.Minute)
			want := w - 40*int64(time.Hour)
			for clk.wall(want) < w {
				want += int64(time.Minute)
			}
			if got := clk.instant(w); got != want {
				t.Errorf("%s wall %s: instant %s, scan gives %s", c.zone, time.Unix(0, w).UTC().Format(time.DateTime),
					time.Unix(0, got).UTC().Format(time.RFC3339), time.Unix(0, want).UTC().Format(time.RFC3339))
			}
		}
	}
}

// Overlapping windows every 12 h, and short windows every 24 h that leave
// the rest of the day out.
func TestStride(t *testing.T) {
	from := time.Date(2024, 1, 8, 0, 0, 0, 0, time.UTC) // a Monday
	s := regular(from, time.Hour, 48, func(ti time.Time) float64 { return float64(ti.Hour()) })
	ds := dataset(site("a", map[string]ingest.Series{"v": s}))
	tests := []struct {
		window, stride time.Duration
		coverage       float64
		starts         []string
		counts         []float64
		skipped        int
	}{
		{24 * time.Hour, 12 * time.Hour, 0, []string{"01-07T12", "01-08T00", "01-08T12", "01-09T00", "01-09T12"}, []float64{12, 24, 24, 24, 12}, 0},
		{24 * time.Hour, 12 * time.Hour, 0.6, []string{"01-08T00", "01-08T12", "01-09T00"}, []float64{24, 24, 24}, 2},
		{6 * time.Hour, 24 * time.Hour, 0.6, []string{"01-08T00", "01-09T00"}, []float64{6, 6}, 0},
		{7 * 24 * time.Hour, 0, 0, []string{"01-08T00"}, []float64{48}, 0},
	}
	for _, tt := range tests {
		tab, err := Extract(ds, Config{Window: tt.window, Stride: tt.stride, MinCoverage: tt.coverage, Features: "count,mean"})
		if err != nil {
			t.Fatal(err)
		}
		var starts []string
		var counts []float64
		for _, w := range tab.Windows {
			starts = append(starts, w.Start.Format("01-02T15"))
			counts = append(counts, value(t, tab, w, "v.count"))
		}
		if !slices.Equal(starts, tt.starts) || !slices.Equal(counts, tt.counts) || tab.Skipped["a"]["coverage"] != tt.skipped {
			t.Errorf("window %v stride %v coverage %v: starts %v counts %v skipped %v; want %v %v %d",
				tt.window, tt.stride, tt.coverage, starts, counts, tab.Skipped, tt.starts, tt.counts, tt.skipped)
		}
	}
}

// Coverage is the smallest share over channels of present ÷ expected
// readings, expected from each channel's median interval over the site.
func TestCoverage(t *testing.T) {
	day := func(d int) time.Time { return time.Date(2024, 1, 8+d, 0, 0, 0, 0, time.UTC) }
	hourly := func(d, n int) ingest.Series {
		return regular(day(d), time.Hour, n, func(time.Time) float64 { return 1 })
	}
	join := func(parts ...ingest.Series) ingest.Series {
		var s ingest.Series
		for _, p := range parts {
			s.Times = append(s.Times, p.Times...)
			s.Values = append(s.Values, p.Values...)
		}
		return s
	}
	// Day 0 complete; day 1 lacks b; day 2 has 13 of 24 readings of a
	// (0.54); day 3 has 15 (0.625); day 4 has nothing; day 5 is complete.
	// b is sampled every 2 h, so 12 of its readings make a full day.
	b := func(d int) ingest.Series {
		return regular(day(d), 2*time.Hour, 12, func(time.Time) float64 { return 2 })
	}
	sd := site("c", map[string]ingest.Series{
		"a": join(hourly(0, 24), hourly(1, 24), hourly(2, 13), hourly(3, 15), hourly(5, 24)),
		"b": join(b(0), b(2), b(3), b(5)),
	})
	tests := []struct {
		min      float64
		features string
		days     []int
		skipped  Skips
	}{
		{0.6, "count", []int{0, 3, 5}, Skips{"coverage": 2, "empty": 1}},
		{0.55, "count", []int{0, 3, 5}, Skips{"coverage": 2, "empty": 1}},
		{0.5, "count", []int{0, 2, 3, 5}, Skips{"coverage": 1, "empty": 1}},
		{0, "count", []int{0, 1, 2, 3, 5}, Skips{"empty": 1}},
		{0.6, "a.count", []int{0, 1, 3, 5}, Skips{"coverage": 1, "empty": 1}}, // b is not used
	}
	for _, tt := range tests {
		tab, err := Extract(dataset(sd), Config{Window: 24 * time.Hour, MinCoverage: tt.min, Features: tt.features})
		if err != nil {
			t.Fatal(err)
		}
		var days []int
		for _, w := range tab.Windows {
			days = append(days, int(w.Start.Sub(day(0)).Hours()/24))
		}
		if !slices.Equal(days, tt.days) || fmt.Sprint(tab.Skipped["c"]) != fmt.Sprint(tt.skipped) {
			t.Errorf("min coverage %v of %s: days %v skipped %v; want %v %v", tt.min, tt.features, days, tab.Skipped["c"], tt.days, tt.skipped)
		}
	}
}

// The centroid of positions on both sides of the antimeridian lies on it,
// as orb/geo.Midpoint (great-circle midpoint, an independent reference)
// says; three positions at the ends of the axes have the centroid
// (35.2644°, 45°), lat = atan(1/√2), by hand.
func TestCentroid(t *testing.T) {
	pairs := [][2]orb.Point{{{179, 10}, {-177, 12}}, {{-170, -60}, {175, -50}}, {{10, 45}, {20, 47}}}
	for _, p := range pairs {
		lat, lon, ok := centroid([]float64{p[0][1], p[1][1]}, []float64{p[0][0], p[1][0]})
		want := geo.Midpoint(p[0], p[1])
		dlon := math.Mod(lon-want[0]+540, 360) - 180
		if !ok || math.Abs(lat-want[1]) > 1e-9 || math.Abs(dlon) > 1e-9 {
			t.Errorf("centroid of %v = %v, %v; orb/geo.Midpoint gives %v", p, lat, lon, want)
		}
	}
	lat, lon, ok := centroid([]float64{0, 0, 90}, []float64{0, 90, 0})
	if !ok || math.Abs(lat-math.Atan(1/math.Sqrt2)*180/math.Pi) > 1e-9 || math.Abs(lon-45) > 1e-9 {
		t.Errorf("centroid of the axes = %v, %v; want 35.2644, 45", lat, lon)
	}
	if _, _, ok := centroid([]float64{0, 0}, []float64{0, 180}); ok {
		t.Error("antipodal positions have no centroid")
	}
}

// A mobile site's windows carry the centroid of their own positions, a
// window without positions the registered position, and a site with neither
// is not located.
func TestWindowPositions(t *testing.T) {
	from := time.Date(2024, 1, 8, 0, 0, 0, 0, time.UTC)
	v := regular(from, time.Hour, 72, func(time.Time) float64 { return 1 })
	var tr ingest.Track
	// Day 0 only, crossing the antimeridian along 17° S: the centroid of
	// positions at ±179.5° lies on the great circle between them, at
	// atan(tan 17° / cos 0.5°) south (by hand).
	for i := range 24 {
		tr.Times = append(tr.Times, from.Add(time.Duration(i)*time.Hour).UnixNano())
		tr.Lat = append(tr.Lat, -17)
		tr.Lon = append(tr.Lon, []float64{179.5, -179.5}[i%2])
	}
	mobile := &ingest.SiteData{ID: "truck", Series: map[string]ingest.Series{"v": v}, Track: tr,
		Info: &ingest.Site{ID: "truck", Lat: 51, Lon: 7, Located: true}}
	fixed := &ingest.SiteData{ID: "pump", Series: map[string]ingest.Series{"v": v},
		Info: &ingest.Site{ID: "pump", Lat: 48.1, Lon: 11.6, Located: true}}
	lost := &ingest.SiteData{ID: "unregistered", Series: map[string]ingest.Series{"v": v}}
	tab, err := Extract(dataset(mobile, fixed, lost), Config{Window: 24 * time.Hour, Features: "count"})
	if err != nil {
		t.Fatal(err)
	}
	type pos struct {
		site    string
		located bool
		lat     float64
		absLon  float64
	}
	var got []pos
	for _, w := range tab.Windows {
		got = append(got, pos{w.Site, w.Located, math.Round(w.Lat*1e6) / 1e6, math.Round(math.Abs(w.Lon)*1e6) / 1e6})
	}
	want := []pos{
		{"pump", true, 48.1, 11.6}, {"pump", true, 48.1, 11.6}, {"pump", true, 48.1, 11.6},
		{"truck", true, math.Round(-math.Atan(math.Tan(17*math.Pi/180)/math.Cos(0.5*math.Pi/180))*180/math.Pi*1e6) / 1e6, 180}, {"truck", true, 51, 7}, {"truck", true, 51, 7},
		{"unregistered", false, 0, 0}, {"unregistered", false, 0, 0}, {"unregistered", false, 0, 0},
	}
	if !slices.Equal(got, want) {
		t.Errorf("positions\n got %v\nwant %v", got, want)
	}
}

func TestFeatureNames(t *testing.T) {
	ds := dataset(site("s", map[string]ingest.Series{"temp": {}, "flow": {}, "amps": {}}))
	tests := []struct {
		features string
		pairs    bool
		want     string
	}{
		{"basic", false, "amps.mean amps.std amps.min amps.max amps.p05 amps.p50 amps.p95 amps.trend amps.flat " +
			"flow.mean flow.std flow.min flow.max flow.p05 flow.p50 flow.p95 flow.trend flow.flat " +
			"temp.mean temp.std temp.min temp.max temp.p05 temp.p50 temp.p95 temp.trend temp.flat"},
		{"count, mean", true, "amps.mean amps.count flow.mean flow.count temp.mean temp.count amps~flow.corr amps~temp.corr flow~temp.corr"},
		{"flow.p95,max,temp~flow.corr", false, "amps.max flow.max flow.p95 temp.max flow~temp.corr"},
		{"full", false, "amps.mean amps.std amps.min amps.max amps.p05 amps.p50 amps.p95 amps.trend amps.acf1 amps.day_amp " +
			"amps.day_phase amps.period amps.period_share amps.flat amps.count flow.mean flow.std flow.min flow.max flow.p05 " +
			"flow.p50 flow.p95 flow.trend flow.acf1 flow.day_amp flow.day_phase flow.period flow.period_share flow.flat " +
			"flow.count temp.mean temp.std temp.min temp.max temp.p05 temp.p50 temp.p95 temp.trend temp.acf1 temp.day_amp " +
			"temp.day_phase temp.period temp.period_share temp.flat temp.count"},
	}
	for _, tt := range tests {
		tab, err := Extract(ds, Config{Window: time.Hour, Features: tt.features, Pairs: tt.pairs})
		if err != nil {
			t.Fatal(err)
		}
		if got := strings.Join(tab.Names, " "); got != tt.want {
			t.Errorf("%q: names\n%s\nwant\n%s", tt.features, got, tt.want)
		}
	}
}

func TestConfigErrors(t *testing.T) {
	ds := dataset(site("s", map[string]ingest.Series{"flow": {}, "temp": {}}))
	base := DefaultConfig()
	tests := []struct {
		edit func(*Config)
		msg  string
	}{
		{func(c *Config) { c.Window = 0 }, "window 0s: must be positive"},
		{func(c *Config) { c.Window = -time.Hour }, "must be positive"},
		{func(c *Config) { c.Stride = -time.Hour }, "stride -1h0m0s: must not be negative"},
		{func(c *Config) { c.TZ = "Mars/Olympus" }, `time zone "Mars/Olympus"`},
		{func(c *Config) { c.TZ = "Local" }, "name an IANA zone"},
		{func(c *Config) { c.MinCoverage = 1.5 }, "must lie in [0, 1]"},
		{func(c *Config) { c.MinCoverage = math.NaN() }, "must lie in [0, 1]"},
		{func(c *Config) { c.Workers = -1 }, "workers -1"},
		{func(c *Config) { c.Features = "" }, "empty feature list"},
		{func(c *Config) { c.Features = "mean,median" }, `unknown feature "median" (sets basic, full; stats mean, std, min, max, p05, p50, p95, trend, acf1, day_amp, day_phase, period, period_share, flat, count;`},
		{func(c *Config) { c.Features = "flow.median" }, `unknown stat "median"`},
		{func(c *Config) { c.Features = "flow~flow.corr" }, "two different channels"},
		{func(c *Config) { c.Features = "wind.mean" }, `unknown channel "wind" in the feature list (channels: flow, temp)`},
		{func(c *Config) { c.Features = "flow~wind.corr" }, `unknown channel "wind"`},
	}
	for _, tt := range tests {
		cfg := base
		tt.edit(&cfg)
		_, err := Extract(ds, cfg)
		if err == nil || !strings.Contains(err.Error(), tt.msg) || !strings.HasPrefix(err.Error(), "features: ") {
			t.Errorf("%+v: error %v; want one containing %q", cfg, err, tt.msg)
		}
		if unknown := strings.Contains(tt.msg, "unknown channel"); errors.Is(err, ErrUnknownName) != unknown {
			t.Errorf("%+v: errors.Is(%v, ErrUnknownName) is %v, want %v", cfg, err, !unknown, unknown)
		}
	}
	if err := base.Validate(); err != nil {
		t.Errorf("default config: %v", err)
	}
	if _, err := Extract(nil, base); err == nil {
		t.Error("nil dataset accepted")
	}
}

// Windows come sorted by site, then start, whatever the order of the sites
// and the number of workers, and identical for any number of workers.
func TestOrderAndWorkers(t *testing.T) {
	var sites []*ingest.SiteData
	for _, id := range []string{"s3", "s1", "s10", "s2"} {
		sd := gappy(uint64(len(id) * int(id[1])))
		sd.ID = id
		sites = append(sites, sd)
	}
	ds := dataset(sites...)
	ref, err := Extract(ds, Config{Window: 12 * time.Hour, Features: "full", Pairs: true, Workers: 1})
	if err != nil {
		t.Fatal(err)
	}
	var order []string
	for i, w := range ref.Windows {
		if i > 0 && (w.Site < ref.Windows[i-1].Site || w.Site == ref.Windows[i-1].Site && !w.Start.After(ref.Windows[i-1].Start)) {
			t.Fatalf("window %d (%s %v) out of order", i, w.Site, w.Start)
		}
		if len(order) == 0 || order[len(order)-1] != w.Site {
			order = append(order, w.Site)
		}
	}
	if want := []string{"s1", "s10", "s2", "s3"}; !slices.Equal(order, want) {
		t.Errorf("site order %v, want %v", order, want)
	}
	for _, n := range []int{0, 3, 8} {
		got, err := Extract(ds, Config{Window: 12 * time.Hour, Features: "full", Pairs: true, Workers: n})
		if err != nil {
			t.Fatal(err)
		}
		if fmt.Sprint(got.Windows) != fmt.Sprint(ref.Windows) {
			t.Errorf("%d workers give other windows than 1", n)
		}
	}
}

// Channels reads the channels back from feature names, those of pairs
// included; a channel name may hold a dot.
func TestChannelsOfNames(t *testing.T) {
	got := Channels([]string{"pump.flow.mean", "pump.flow.p95", "pressure.std", "pressure~temp.corr", "temp.mean"})
	if want := []string{"pressure", "pump.flow", "temp"}; !slices.Equal(got, want) {
		t.Errorf("Channels = %v, want %v", got, want)
	}
}
