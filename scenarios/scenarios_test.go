package scenarios

import (
	"bytes"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"
	"time"

	"github.com/paulmach/orb"
	"github.com/paulmach/orb/planar"
	"github.com/paulmach/orb/project"
)

// small returns a quick spec of a scenario.
func small(t testing.TB, name string, sites, weeks int) Spec {
	t.Helper()
	spec, err := DefaultSpec(name)
	if err != nil {
		t.Fatal(err)
	}
	spec.Sites, spec.Weeks = sites, weeks
	return spec
}

func generateT(t testing.TB, spec Spec) *Fleet {
	t.Helper()
	f, err := Generate(spec)
	if err != nil {
		t.Fatal(err)
	}
	return f
}

func TestDefaultSpec(t *testing.T) {
	tests := []struct {
		name  string
		sites int
	}{
		{"pumping", 300},
		{"reefers", 60},
	}
	if got, want := Names(), []string{"pumping", "reefers"}; !slices.Equal(got, want) {
		t.Fatalf("Names() = %v, want %v", got, want)
	}
	for _, tt := range tests {
		spec, err := DefaultSpec(tt.name)
		if err != nil {
			t.Fatal(err)
		}
		s := spec.Start
		if spec.Name != tt.name || spec.Sites != tt.sites || spec.Weeks != 4 || spec.Seed != 1 ||
			s.Location() != time.UTC || s.Weekday() != time.Monday || s.Year() != 2026 || !s.Equal(s.Truncate(24*time.Hour)) {
			t.Errorf("DefaultSpec(%q) = %+v", tt.name, spec)
		}
	}
	_, err := DefaultSpec("harbour")
	if err == nil || !strings.Contains(err.Error(), "pumping, reefers") || !strings.HasPrefix(err.Error(), "scenarios: ") {
		t.Errorf("unknown name: error %v, want one listing the known names", err)
	}
}

func TestGenerateRejectsBadSpecs(t *testing.T) {
	good := small(t, "pumping", 3, 1)
	tests := []struct {
		name   string
		change func(*Spec)
		want   string
	}{
		{"unknown", func(s *Spec) { s.Name = "harbour" }, "unknown scenario"},
		{"no sites", func(s *Spec) { s.Sites = 0 }, "0 sites"},
		{"too many sites", func(s *Spec) { s.Sites = maxSites + 1 }, "sites"},
		{"no weeks", func(s *Spec) { s.Weeks = 0 }, "0 weeks"},
		{"too long", func(s *Spec) { s.Weeks = maxWeeks + 1 }, "weeks"},
		{"too many readings", func(s *Spec) { s.Sites, s.Weeks = maxSites, maxWeeks }, "readings"},
		{"no start", func(s *Spec) { s.Start = time.Time{} }, "no start"},
		{"not midnight", func(s *Spec) { s.Start = s.Start.Add(time.Hour) }, "midnight"},
		{"local midnight", func(s *Spec) {
			s.Start = time.Date(2026, 6, 1, 0, 0, 0, 0, time.FixedZone("CEST", 2*3600))
		}, "midnight"},
	}
	for _, tt := range tests {
		spec := good
		tt.change(&spec)
		verr := spec.Validate()
		if verr == nil || !strings.Contains(verr.Error(), tt.want) {
			t.Errorf("%s: Validate: error %v, want one saying %q", tt.name, verr, tt.want)
		}
		_, err := Generate(spec)
		if err == nil || !strings.Contains(err.Error(), tt.want) {
			t.Errorf("%s: Generate: error %v, want one saying %q", tt.name, err, tt.want)
		}
	}
	if err := good.Validate(); err != nil {
		t.Errorf("good spec: Validate: %v", err)
	}
	if _, err := Generate(good); err != nil {
		t.Errorf("good spec: %v", err)
	}
	// Midnight UTC written in another zone is fine and kept as UTC.
	good.Start = time.Date(2026, 6, 1, 2, 0, 0, 0, time.FixedZone("CEST", 2*3600))
	f, err := Generate(good)
	if err != nil || f.Spec.Start.Location() != time.UTC || f.WindowStart(0).Hour() != 0 {
		t.Errorf("midnight UTC given in CEST: %v", err)
	}
}

// TestDeterministic checks that the files depend on the spec alone.
func TestDeterministic(t *testing.T) {
	for _, name := range Names() {
		spec := small(t, name, 8, 2)
		write := func(spec Spec) map[string][]byte {
			dir := t.TempDir()
			paths, err := generateT(t, spec).Write(dir)
			if err != nil {
				t.Fatal(err)
			}
			files := make(map[string][]byte)
			for _, p := range paths {
				b, err := os.ReadFile(p)
				if err != nil {
					t.Fatal(err)
				}
				files[filepath.Base(p)] = b
			}
			return files
		}
		first, again := write(spec), write(spec)
		spec.Seed++
		other := write(spec)
		for file, b := range first {
			if !bytes.Equal(b, again[file]) {
				t.Errorf("%s: %s differs between two runs of the same spec", name, file)
			}
			if bytes.Equal(b, other[file]) {
				t.Errorf("%s: %s is the same for seeds %d and %d", name, file, spec.Seed-1, spec.Seed)
			}
		}
	}
}

func TestSizes(t *testing.T) {
	for _, name := range Names() {
		spec := small(t, name, 7, 3)
		f := generateT(t, spec)
		windows := spec.Weeks * 7
		if len(f.Sites) != spec.Sites || f.Windows() != windows || f.Step != 10*time.Minute || f.Window != 24*time.Hour {
			t.Fatalf("%s: %d sites, %d windows, step %v, window %v", name, len(f.Sites), f.Windows(), f.Step, f.Window)
		}
		if got := f.WindowStart(windows); !got.Equal(spec.Start.AddDate(0, 0, windows)) {
			t.Errorf("%s: end of the last window %v", name, got)
		}
		if f.Defects.Slots != int64(spec.Sites*windows*144) {
			t.Errorf("%s: %d slots, want %d", name, f.Defects.Slots, spec.Sites*windows*144)
		}
		ids := make([]string, len(f.Sites))
		start, end := spec.Start.UnixNano(), f.WindowStart(windows).UnixNano()
		for i, s := range f.Sites {
			ids[i] = s.ID
			r := s.Readings
			if len(s.Regimes) != windows || len(r.Values) != len(f.Channels) {
				t.Fatalf("%s: %s: %d regimes, %d channels", name, s.ID, len(s.Regimes), len(r.Values))
			}
			for _, v := range r.Values {
				if len(v) != r.Len() {
					t.Fatalf("%s: %s: %d values for %d rows", name, s.ID, len(v), r.Len())
				}
			}
			if f.Mobile != (r.Lat != nil) || (r.Lat != nil && (len(r.Lat) != r.Len() || len(r.Lon) != r.Len())) {
				t.Fatalf("%s: %s: positions do not match the rows", name, s.ID)
			}
			if !slices.IsSorted(r.Times) || r.Times[0] < start || r.Times[r.Len()-1] >= end {
				t.Errorf("%s: %s: times unsorted or outside the record", name, s.ID)
			}
			for _, a := range s.Attrs {
				switch a.Value.(type) {
				case string, int64, float64:
				default:
					t.Errorf("%s: %s: attribute %s of type %T", name, s.ID, a.Name, a.Value)
				}
			}
		}
		if !slices.IsSorted(ids) || len(slices.Compact(ids)) != spec.Sites {
			t.Errorf("%s: site IDs not sorted and unique: %v", name, ids)
		}
	}
}

// TestTruth checks the promises about switches: at a window boundary, with
// at least minDwell windows on either side, to a plausible regime, and
// matching the per-window truth.
func TestTruth(t *testing.T) {
	for _, name := range Names() {
		spec := small(t, name, 150, 3)
		f := generateT(t, spec)
		sc, _ := lookup(name)
		movers, twice := 0, 0
		seen := make([]int, len(f.Regimes))
		for _, s := range f.Sites {
			changes := 0
			for w, r := range s.Regimes {
				seen[r]++
				if w > 0 && r != s.Regimes[w-1] {
					changes++
				}
			}
			if changes != len(s.Switches) {
				t.Errorf("%s: %s: %d regime changes, %d switches", name, s.ID, changes, len(s.Switches))
			}
			last := 0
			for _, sw := range s.Switches {
				w := sw.Window
				if sw.Site != s.ID || !sw.Time.Equal(f.WindowStart(w)) || sw.Time.Location() != time.UTC ||
					sw.Time.Hour()+sw.Time.Minute()+sw.Time.Second() != 0 {
					t.Errorf("%s: %s: switch %+v not at the start of window %d", name, s.ID, sw, w)
				}
				if w-last < minDwell || f.Windows()-w < minDwell {
					t.Errorf("%s: %s: switch at window %d breaks the dwell rule", name, s.ID, w)
				}
				if s.Regimes[w-1] != sw.From || s.Regimes[w] != sw.To || sw.From == sw.To {
					t.Errorf("%s: %s: switch %+v does not match the windows", name, s.ID, sw)
				}
				if !slices.Contains(sc.next[sw.From], sw.To) {
					t.Errorf("%s: %s: switch from %s to %s is not planned", name, s.ID, f.Regimes[sw.From], f.Regimes[sw.To])
				}
				last = w
			}
			if len(s.Switches) > 0 {
				movers++
			}
			if len(s.Switches) > 1 {
				twice++
			}
		}
		if want := int(math.Round(switchShare * float64(spec.Sites))); movers != want {
			t.Errorf("%s: %d sites switch, want %d", name, movers, want)
		}
		if want := int(math.Round(twiceShare * math.Round(switchShare*float64(spec.Sites)))); twice != want {
			t.Errorf("%s: %d sites switch twice, want %d", name, twice, want)
		}
		for r, n := range seen {
			if n == 0 {
				t.Errorf("%s: no window in regime %s", name, f.Regimes[r])
			}
		}
		if got := len(f.Switches()); got != movers+twice {
			t.Errorf("%s: Switches() lists %d, want %d", name, got, movers+twice)
		}
	}
}

// TestOneWeek checks that a week, too short for two switches with their
// dwells (3·minDwell windows), has sites that switch only once.
func TestOneWeek(t *testing.T) {
	f := generateT(t, small(t, "pumping", 60, 1))
	movers := 0
	for _, s := range f.Sites {
		if len(s.Switches) > 1 {
			t.Errorf("%s switches %d times in 7 windows", s.ID, len(s.Switches))
		}
		movers += len(s.Switches)
	}
	if movers == 0 {
		t.Error("no switch in a week of 60 sites")
	}
}

// localKm returns planar coordinates in km around a reference latitude
// (equirectangular projection), good enough for distances of a few km.
func localKm(p orb.Point, lat0 float64) orb.Point {
	const kmPerDegree = 111.195 // mean Earth radius 6371.0 km × π/180 (common practice, no source)
	return orb.Point{p.Lon() * kmPerDegree * math.Cos(lat0*math.Pi/180), p.Lat() * kmPerDegree}
}

// distanceKm returns the distance from p to the nearest point of line
// (orb/planar.DistanceFrom in the local projection around p).
func distanceKm(line orb.LineString, p orb.Point) float64 {
	proj := func(q orb.Point) orb.Point { return localKm(q, p.Lat()) }
	return planar.DistanceFrom(project.LineString(line.Clone(), proj), proj(p))
}

func validWGS84(lat, lon float64) bool {
	return lat >= -90 && lat <= 90 && lon >= -180 && lon <= 180
}

// TestPumpingSitesLieAlongRivers checks that stations are placed along the
// river branches (within 3 km, six times the lateral spread) and that every
// branch has stations.
func TestPumpingSitesLieAlongRivers(t *testing.T) {
	f := generateT(t, small(t, "pumping", 300, 1))
	branches := basin()
	count := make(map[string]int)
	for _, s := range f.Sites {
		if !validWGS84(s.Lat, s.Lon) {
			t.Fatalf("%s at %v, %v", s.ID, s.Lat, s.Lon)
		}
		if s.Readings.Lat != nil {
			t.Fatalf("%s: a fixed site with positions", s.ID)
		}
		near := math.Inf(1)
		var on string
		for _, b := range branches {
			if d := distanceKm(b.line, orb.Point{s.Lon, s.Lat}); d < near {
				near, on = d, b.name
			}
		}
		if near > 3 {
			t.Errorf("%s is %.1f km from the nearest river", s.ID, near)
		}
		count[on]++
	}
	for _, b := range branches {
		if count[b.name] == 0 {
			t.Errorf("no station on the %s", b.name)
		}
	}
}

// TestReeferPositions checks that every fix is valid and lies on the unit's
// route or its home depot's delivery round, and that units do move. The
// tolerance of 500 m covers the GPS noise (8 m) and the gap between the
// great-circle legs and the straight lines of the test's local projection.
func TestReeferPositions(t *testing.T) {
	f := generateT(t, small(t, "reefers", 20, 1))
	depots, routes := network()
	byName := make(map[string]int)
	for i, d := range depots {
		byName[d.name] = i
	}
	attr := func(s *Site, name string) string {
		for _, a := range s.Attrs {
			if a.Name == name {
				return a.Value.(string)
			}
		}
		t.Fatalf("%s: no attribute %s", s.ID, name)
		return ""
	}
	for _, s := range f.Sites {
		home, dest := byName[attr(s, "home_depot")], byName[attr(s, "destination")]
		if s.Lat != depots[home].at.Lat() || s.Lon != depots[home].at.Lon() {
			t.Errorf("%s: registered at %v, %v, not at its home depot", s.ID, s.Lat, s.Lon)
		}
		route, round := routes[[2]int{home, dest}], depots[home].loop
		r := s.Readings
		fixes, moves := 0, 0
		for i := range r.Times {
			lat, lon := r.Lat[i], r.Lon[i]
			if math.IsNaN(lat) != math.IsNaN(lon) {
				t.Fatalf("%s: half a position at row %d", s.ID, i)
			}
			if math.IsNaN(lat) {
				continue
			}
			fixes++
			if !validWGS84(lat, lon) {
				t.Fatalf("%s: position %v, %v", s.ID, lat, lon)
			}
			p := orb.Point{lon, lat}
			if d := math.Min(distanceKm(route, p), distanceKm(round, p)); d > 0.5 {
				t.Errorf("%s: row %d is %.2f km off its route and round", s.ID, i, d)
				break
			}
			if i > 0 && !math.IsNaN(r.Lat[i-1]) && planar.Distance(localKm(orb.Point{r.Lon[i-1], r.Lat[i-1]}, lat), localKm(p, lat)) > 1 {
				moves++
			}
		}
		if fixes == 0 {
			t.Errorf("%s: no position fix", s.ID)
		}
		parked := true
		for _, reg := range s.Regimes {
			parked = parked && reg == reeferParked
		}
		if !parked && moves == 0 {
			t.Errorf("%s never moves", s.ID)
		}
	}
}

// Write with names writes those files only, and refuses a name it does not
// know without writing anything.
func TestWriteSome(t *testing.T) {
	f, err := Generate(small(t, "pumping", 3, 1))
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	paths, err := f.Write(dir, FileSites, FileLongParquet)
	if err != nil {
		t.Fatal(err)
	}
	entries, _ := os.ReadDir(dir)
	if len(paths) != 2 || len(entries) != 2 || filepath.Base(paths[0]) != FileSites || filepath.Base(paths[1]) != FileLongParquet {
		t.Errorf("wrote %v, folder holds %d files; want sites.csv and readings-long.parquet only", paths, len(entries))
	}
	other := t.TempDir()
	if _, err := f.Write(other, FileSites, "readings.xlsx"); err == nil || !strings.Contains(err.Error(), "readings.xlsx") {
		t.Errorf("unknown file name: error %v", err)
	}
	if entries, _ := os.ReadDir(other); len(entries) != 0 {
		t.Errorf("a refused Write left %d files", len(entries))
	}
}
