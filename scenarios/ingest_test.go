package scenarios

import (
	"math"
	"path/filepath"
	"slices"
	"testing"

	"github.com/kinmap/kinmap/ingest"
)

// TestIngestReadsEveryDump reads each readings file with ingest.Read under
// the default options and checks that every dump yields the fleet's
// readings: one per site, channel and time, duplicates resolved.
func TestIngestReadsEveryDump(t *testing.T) {
	for name, w := range writeSmall(t) {
		f := w.fleet
		var channels []string
		for _, c := range f.Channels {
			channels = append(channels, c.Name)
		}
		slices.Sort(channels)
		var readings, duplicates int64
		for _, s := range f.Sites {
			for k, tm := range s.Readings.Times {
				dup := k > 0 && tm == s.Readings.Times[k-1]
				for _, values := range s.Readings.Values {
					if math.IsNaN(values[k]) {
						continue
					}
					if dup {
						duplicates++
					} else {
						readings++
					}
				}
			}
		}
		reg, err := ingest.ReadRegister(filepath.Join(w.dir, FileSites), ingest.DefaultRegisterOptions())
		if err != nil {
			t.Fatalf("%s: register: %v", name, err)
		}
		if len(reg.Sites) != len(f.Sites) {
			t.Errorf("%s: register of %d sites, want %d", name, len(reg.Sites), len(f.Sites))
		}
		for _, s := range f.Sites {
			e, ok := reg.Lookup(s.ID)
			if !ok || !e.Located || e.Lat != s.Lat || e.Lon != s.Lon || len(e.Attrs) != len(s.Attrs)+1 { // name is an attribute too
				t.Errorf("%s: register entry %+v for %s", name, e, s.ID)
				continue
			}
			for i, a := range s.Attrs {
				if got := e.Attrs[i+1]; got.Name != a.Name || !sameAttr(got.Value, a.Value) {
					t.Errorf("%s: %s: attribute %+v, want %+v", name, s.ID, got, a)
				}
			}
		}
		for _, file := range []string{FileLongParquet, FileWideParquet, FileArrow, FileCSV} {
			opt := ingest.DefaultOptions()
			opt.Register = reg
			ds, err := ingest.Read([]string{filepath.Join(w.dir, file)}, opt)
			if err != nil {
				t.Errorf("%s %s: %v", name, file, err)
				continue
			}
			sum := ds.Summary
			wantLayout := "long"
			if file == FileWideParquet {
				wantLayout = "wide"
			}
			if sum.Layout != wantLayout || sum.Readings != readings || sum.Duplicates != duplicates ||
				!slices.Equal(ds.Channels, channels) || len(ds.Sites) != len(f.Sites) || len(sum.Unregistered) != 0 {
				t.Errorf("%s %s: layout %s, %d readings, %d duplicates, channels %v, %d sites, unregistered %v; want %s, %d, %d, %v, %d",
					name, file, sum.Layout, sum.Readings, sum.Duplicates, ds.Channels, len(ds.Sites), sum.Unregistered,
					wantLayout, readings, duplicates, channels, len(f.Sites))
				continue
			}
			for i, s := range f.Sites {
				got := ds.Sites[i]
				if got.ID != s.ID || got.Info == nil {
					t.Fatalf("%s %s: site %d is %s", name, file, i, got.ID)
				}
				for ch, c := range f.Channels {
					series := got.Series[c.Name]
					j := 0
					for k, tm := range s.Readings.Times {
						v := s.Readings.Values[ch][k]
						if math.IsNaN(v) || (k > 0 && tm == s.Readings.Times[k-1]) {
							continue
						}
						if j >= series.Len() || series.Times[j] != tm || series.Values[j] != v {
							t.Fatalf("%s %s: %s %s: reading %d differs", name, file, s.ID, c.Name, j)
						}
						j++
					}
					if j != series.Len() {
						t.Fatalf("%s %s: %s %s: %d readings, want %d", name, file, s.ID, c.Name, series.Len(), j)
					}
				}
				if f.Mobile && got.Track.Len() == 0 {
					t.Errorf("%s %s: %s has no track", name, file, s.ID)
				}
			}
		}
	}
}

// sameAttr compares attribute values; a number column may read back as
// integers when all its values happen to be whole.
func sameAttr(got, want any) bool {
	if w, ok := want.(float64); ok {
		if g, ok := got.(int64); ok {
			return float64(g) == w
		}
	}
	return got == want
}
