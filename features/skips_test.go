package features

import (
	"maps"
	"testing"
	"time"

	"github.com/kinmap/kinmap/ingest"
)

// The reasons a table skipped windows, summed over sites and worded in the
// order of their names.
func TestSkipReasons(t *testing.T) {
	tests := []struct {
		skipped map[string]Skips
		want    string
	}{
		{nil, "no windows at all"},
		{map[string]Skips{"a": {"coverage": 2}}, "2 for coverage"},
		{map[string]Skips{"a": {"coverage": 2, "empty": 1}, "b": {"coverage": 3}}, "5 for coverage, 1 for empty"},
	}
	for _, tt := range tests {
		tab := &Table{Skipped: tt.skipped}
		if got := tab.SkipReasons(); got != tt.want {
			t.Errorf("SkipReasons(%v) = %q, want %q", tt.skipped, got, tt.want)
		}
	}
}

// Unused counts the readings in no kept window, checked against a plain
// scan of the readings over the windows kept: a day that fails the
// coverage rule and, with a stride longer than the window, the hours
// between windows.
func TestUnusedReadings(t *testing.T) {
	day := time.Date(2024, 3, 4, 0, 0, 0, 0, time.UTC)
	full := regular(day, 10*time.Minute, 3*144, func(time.Time) float64 { return 1 })
	// The second day keeps a third of its readings: below the coverage rule.
	var s ingest.Series
	for i, tm := range full.Times {
		if d := i / 144; d != 1 || i%3 == 0 {
			s.Times, s.Values = append(s.Times, tm), append(s.Values, full.Values[i])
		}
	}
	ds := dataset(&ingest.SiteData{ID: "a", Series: map[string]ingest.Series{"flow": s}},
		&ingest.SiteData{ID: "b", Series: map[string]ingest.Series{"flow": full}})
	for _, tt := range []struct {
		name   string
		stride time.Duration
	}{{"day windows", 0}, {"stride longer than the window", 30 * time.Hour}} {
		t.Run(tt.name, func(t *testing.T) {
			cfg := DefaultConfig()
			cfg.Stride, cfg.Workers = tt.stride, 1
			tab, err := Extract(ds, cfg)
			if err != nil {
				t.Fatal(err)
			}
			want := map[string]int64{}
			for _, sd := range ds.Sites {
				for _, tm := range sd.Series["flow"].Times {
					used := false
					for _, w := range tab.Windows {
						used = used || w.Site == sd.ID && tm >= w.Start.UnixNano() && tm < w.End.UnixNano()
					}
					if !used {
						want[sd.ID]++
					}
				}
			}
			if len(want) == 0 {
				t.Fatal("the case leaves no reading unused")
			}
			if !maps.Equal(tab.Unused, want) {
				t.Errorf("unused %v, want %v", tab.Unused, want)
			}
		})
	}
}
