package features

import (
	"errors"
	"math"
	"testing"
	"time"

	"github.com/kinmap/kinmap/ingest"
)

// TestWindowsSuitTheData checks the settings that once ran for minutes or
// without end (--window 10ms, --window 1ns, --stride 1ms on readings every
// 5 s), a window count beyond MaxWindows, and readings near the end of the
// int64-nanosecond range (year 2262), where window bounds wrapped around
// and gave 170 overlapping daily windows per site. Each is refused before
// any window is cut, with the step found or the limit.
func TestWindowsSuitTheData(t *testing.T) {
	start := time.Date(2026, 6, 1, 0, 0, 0, 0, time.UTC)
	flat := func(time.Time) float64 { return 1 }
	week := dataset(&ingest.SiteData{ID: "A", Series: map[string]ingest.Series{"flow": regular(start, 5*time.Second, 7*17280, flat)}})
	// Ten readings a second apart, then one ten years later.
	sparse := regular(start, time.Second, 10, flat)
	sparse.Times = append(sparse.Times, start.AddDate(10, 0, 0).UnixNano())
	sparse.Values = append(sparse.Values, 1)
	late := time.Unix(0, math.MaxInt64-int64(3*24*time.Hour)).UTC()
	tests := []struct {
		name   string
		ds     *ingest.Dataset
		window time.Duration
		stride time.Duration
		check  func(err error) bool
	}{
		{"window 10ms", week, 10 * time.Millisecond, 0, func(err error) bool {
			var se *StepError
			return errors.As(err, &se) && se.Field == "Window" && se.Step == 5*time.Second
		}},
		{"window 1ns", week, 1, 0, func(err error) bool {
			var se *StepError
			return errors.As(err, &se) && se.Field == "Window" && se.Value == 1
		}},
		{"stride 1ms", week, 24 * time.Hour, time.Millisecond, func(err error) bool {
			var se *StepError
			return errors.As(err, &se) && se.Field == "Stride" && se.Step == 5*time.Second
		}},
		{"stride of the step", week, time.Hour, time.Minute, func(err error) bool { return err == nil }},
		{"ten years of seconds", dataset(&ingest.SiteData{ID: "A", Series: map[string]ingest.Series{"flow": sparse}}), time.Second, 0, func(err error) bool {
			var le *WindowLimitError
			return errors.As(err, &le) && le.Windows > MaxWindows
		}},
		{"year 2262", dataset(&ingest.SiteData{ID: "A", Series: map[string]ingest.Series{"flow": regular(late.Add(-48*time.Hour), time.Minute, 24*60, flat)}}), 24 * time.Hour, 0, func(err error) bool {
			var te *TimeRangeError
			return errors.As(err, &te) && te.Site == "A"
		}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			cfg := DefaultConfig()
			cfg.Window, cfg.Stride = tt.window, tt.stride
			tab, err := Extract(tt.ds, cfg)
			if !tt.check(err) {
				n := 0
				if tab != nil {
					n = len(tab.Windows)
				}
				t.Fatalf("error %v (%d windows)", err, n)
			}
		})
	}
}
