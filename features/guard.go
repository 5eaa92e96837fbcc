package features

import (
	"fmt"
	"math"
	"slices"
	"time"

	"github.com/kinmap/kinmap/ingest"
	"github.com/kinmap/kinmap/internal/parallel"
	"github.com/kinmap/kinmap/internal/selection"
)

// MaxWindows is the most windows Extract cuts over all sites of a dataset,
// checked before any is cut.
const MaxWindows = 5_000_000

// stepSample is the number of intervals from the start of each series that
// the sampling step is estimated from.
const stepSample = 4096

// StepError reports a window length or stride shorter than the sampling
// step of the data: each window would hold one reading at most, and the
// windows would be counted in millions, to no purpose.
type StepError struct {
	Field string        // "Window" or "Stride", the Config field
	Value time.Duration // its value
	Step  time.Duration // the sampling step found in the data
}

func (e *StepError) Error() string {
	return fmt.Sprintf("features: %s %v is shorter than the sampling step found in the data (%v)", e.Field, e.Value, e.Step)
}

// WindowLimitError reports settings that would cut more than MaxWindows.
type WindowLimitError struct {
	Windows float64       // windows the settings would cut
	Stride  time.Duration // the distance between window starts
}

func (e *WindowLimitError) Error() string {
	return fmt.Sprintf("features: windows every %v would make about %.0f windows, beyond the limit of %d", e.Stride, e.Windows, MaxWindows)
}

// TimeRangeError reports a reading so close to the ends of the times that
// int64 nanoseconds hold (1677-09-21 to 2262-04-11) that the windows
// around it cannot be counted.
type TimeRangeError struct {
	Site string
	Time time.Time
}

func (e *TimeRangeError) Error() string {
	return fmt.Sprintf("features: site %q: reading at %s: too close to the limits of the time range (1677-09-21 to 2262-04-11) to cut windows around it",
		e.Site, e.Time.Format(time.RFC3339))
}

// checkData checks, before any window is cut, that the windows of cfg
// suit the data: no shorter than the typical sampling step (the median over
// series of the median interval between readings), at most MaxWindows of
// them, and with every bound representable. It returns the step of every
// series of two readings or more, sorted.
func checkData(ds *ingest.Dataset, p *plan, cfg Config) ([]time.Duration, error) {
	size, stride := int64(cfg.Window), int64(cfg.Stride)
	if stride == 0 {
		stride = size
	}
	// Window bounds reach a window and a stride beyond the readings, and
	// zone offsets (under 15 h) and the origin (4 days) on top.
	margin := 2*(size+stride) + 6*dayNs
	// The steps of the sites' series, in parallel: they are sorted below.
	perSite := parallel.Map(len(ds.Sites), cfg.Workers, func() []int64 { return make([]int64, stepSample) }, func(d []int64, k int) []time.Duration {
		var steps []time.Duration
		if sd := ds.Sites[k]; sd != nil {
			for i, ch := range p.channels {
				if s := sd.Series[ch]; s.Len() > 1 && p.used[i] {
					steps = append(steps, time.Duration(sampleStep(s.Times[:min(s.Len(), stepSample+1)], d)))
				}
			}
		}
		return steps
	})
	steps := slices.Concat(perSite...)
	windows := 0.0
	for _, sd := range ds.Sites {
		if sd == nil {
			continue
		}
		first, last := int64(math.MaxInt64), int64(math.MinInt64)
		for i, ch := range p.channels {
			if s := sd.Series[ch]; s.Len() > 0 && p.used[i] {
				first, last = min(first, s.Times[0]), max(last, s.Times[s.Len()-1])
			}
		}
		if first > last {
			continue
		}
		for _, t := range []int64{first, last} {
			if t < math.MinInt64+margin || t > math.MaxInt64-margin {
				return nil, &TimeRangeError{Site: sd.ID, Time: time.Unix(0, t).UTC()}
			}
		}
		windows += (float64(last)-float64(first))/float64(stride) + 1
	}
	slices.Sort(steps)
	if step := MedianStep(steps); step > 0 {
		if size < int64(step) {
			return nil, &StepError{Field: "Window", Value: cfg.Window, Step: step}
		}
		if stride < int64(step) {
			return nil, &StepError{Field: "Stride", Value: time.Duration(stride), Step: step}
		}
	}
	if windows > MaxWindows {
		return nil, &WindowLimitError{Windows: windows, Stride: time.Duration(stride)}
	}
	return steps, nil
}

// MedianStep is the typical sampling step of data whose series have the
// sorted steps: their median (the upper middle one of an even number), as
// Table.Step; 0 for none. A runner that cuts sites apart, as the Beam path
// does, joins the Table.Steps of its sites and takes this.
func MedianStep(steps []time.Duration) time.Duration {
	if len(steps) == 0 {
		return 0
	}
	return steps[len(steps)/2]
}

// sampleStep is the median interval between the sorted times, using d,
// of room for every interval, as scratch.
func sampleStep(times []int64, d []int64) int64 {
	d = d[:len(times)-1]
	for i := range d {
		d[i] = times[i+1] - times[i]
	}
	selection.Nth(d, len(d)/2)
	return d[len(d)/2]
}
