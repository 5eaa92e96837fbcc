package scenarios

import (
	"math"
	"slices"
	"testing"

	"gonum.org/v1/gonum/stat"
)

// windowStats returns, for each window of a site with at least 60 %
// coverage, the mean, standard deviation and 10 % and 90 % quantiles of
// every channel (gonum stat.Mean, stat.StdDev and stat.Quantile).
func windowStats(f *Fleet, s *Site) (windows []int, rows [][]float64) {
	start := f.Spec.Start.UnixNano()
	cov := f.coverage(s)
	byWindow := make([][][]float64, f.Windows())
	for w := range byWindow {
		byWindow[w] = make([][]float64, len(f.Channels))
	}
	for k, tm := range s.Readings.Times {
		w := (tm - start) / int64(f.Window)
		for ch, values := range s.Readings.Values {
			if v := values[k]; !math.IsNaN(v) {
				byWindow[w][ch] = append(byWindow[w][ch], v)
			}
		}
	}
	for w, chans := range byWindow {
		if cov[w] < 0.6 {
			continue
		}
		var row []float64
		for _, xs := range chans {
			slices.Sort(xs)
			row = append(row, stat.Mean(xs, nil), stat.StdDev(xs, nil),
				stat.Quantile(0.1, stat.Empirical, xs, nil), stat.Quantile(0.9, stat.Empirical, xs, nil))
		}
		windows = append(windows, s.Regimes[w])
		rows = append(rows, row)
	}
	return windows, rows
}

// TestRegimesSeparable checks the promise that the regimes can be told
// apart from plain per-window statistics despite site-to-site differences:
// after scaling each statistic to zero mean and unit variance over all
// windows, the nearest regime centroid is the true regime for at least 95 %
// of the windows, and for at least 90 % of the windows of each regime.
func TestRegimesSeparable(t *testing.T) {
	for _, tt := range []struct {
		name         string
		sites, weeks int
	}{
		{"pumping", 120, 2},
		{"reefers", 80, 2},
	} {
		f := generateT(t, small(t, tt.name, tt.sites, tt.weeks))
		var truth []int
		var rows [][]float64
		for _, s := range f.Sites {
			w, r := windowStats(f, s)
			truth = append(truth, w...)
			rows = append(rows, r...)
		}
		dims := len(rows[0])
		for j := range dims {
			col := make([]float64, len(rows))
			for i, r := range rows {
				col[i] = r[j]
			}
			mean, sd := stat.MeanStdDev(col, nil)
			if sd == 0 {
				sd = 1 // a constant statistic tells nothing
			}
			for _, r := range rows {
				r[j] = (r[j] - mean) / sd
			}
		}
		centroids := make([][]float64, len(f.Regimes))
		counts := make([]float64, len(f.Regimes))
		for i, r := range rows {
			if centroids[truth[i]] == nil {
				centroids[truth[i]] = make([]float64, dims)
			}
			for j, v := range r {
				centroids[truth[i]][j] += v
			}
			counts[truth[i]]++
		}
		for c := range centroids {
			if counts[c] == 0 {
				t.Fatalf("%s: no window in regime %s", tt.name, f.Regimes[c])
			}
			for j := range centroids[c] {
				centroids[c][j] /= counts[c]
			}
		}
		confusion := make([][]int, len(f.Regimes))
		for c := range confusion {
			confusion[c] = make([]int, len(f.Regimes))
		}
		right := 0
		for i, r := range rows {
			best, bestD := -1, math.Inf(1)
			for c, cen := range centroids {
				d := 0.0
				for j, v := range r {
					d += (v - cen[j]) * (v - cen[j])
				}
				if d < bestD {
					best, bestD = c, d
				}
			}
			confusion[truth[i]][best]++
			if best == truth[i] {
				right++
			}
		}
		acc := float64(right) / float64(len(rows))
		t.Logf("%s: %d windows, nearest centroid right for %.3f; confusion (rows true, columns assigned) %v",
			tt.name, len(rows), acc, confusion)
		if acc < 0.95 {
			t.Errorf("%s: regimes recovered for %.3f of the windows, want at least 0.95", tt.name, acc)
		}
		for c, row := range confusion {
			if recall := float64(row[c]) / counts[c]; recall < 0.9 {
				t.Errorf("%s: %s recovered for %.3f of its windows, want at least 0.9", tt.name, f.Regimes[c], recall)
			}
		}
	}
}
