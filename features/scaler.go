package features

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"sort"
	"strings"

	"gonum.org/v1/gonum/mat"

	"github.com/kinmap/kinmap/internal/quantile"
)

// FitScaler fits a normalisation of every feature of t, ignoring NaN
// values. Method "zscore" centres on the mean and scales by the sample
// standard deviation (denominator n−1); "robust" centres on the median and
// scales by the interquartile range (quantile definition 7 of Hyndman &
// Fan), falling back to the standard deviation when the interquartile range
// is 0 but the feature varies, so that rare departures such as a stuck
// sensor are kept. A feature with fewer than two values or no variance goes
// to Scaler.Dropped, for the caller to report. weights gives a weight for
// some features by name (default 1); it must name features of t and be
// finite and non-negative.
func FitScaler(t *Table, method string, weights map[string]float64) (*Scaler, error) {
	if method != "zscore" && method != "robust" {
		return nil, fmt.Errorf("features: unknown normalisation %q (want zscore or robust)", method)
	}
	if t == nil || len(t.Windows) == 0 {
		return nil, errors.New("features: no windows to fit a normalisation on")
	}
	var unknown []string
	for name, wt := range weights {
		if !slices.Contains(t.Names, name) {
			unknown = append(unknown, name)
		} else if !(wt >= 0 && !math.IsInf(wt, 1)) {
			return nil, fmt.Errorf("features: weight %v of %q: must be finite and non-negative", wt, name)
		}
	}
	if len(unknown) > 0 {
		sort.Strings(unknown)
		return nil, unknownNameError{fmt.Errorf("features: weights for unknown features %s (features: %s)", strings.Join(unknown, ", "), strings.Join(t.Names, ", "))}
	}
	s := &Scaler{Method: method}
	col := make([]float64, 0, len(t.Windows))
	for j, name := range t.Names {
		col = col[:0]
		for _, w := range t.Windows {
			if v := w.Values[j]; !math.IsNaN(v) {
				col = append(col, v)
			}
		}
		center, scale := meanStd(col)
		if method == "robust" && len(col) > 1 {
			slices.Sort(col)
			center = quantile.Sorted(col, 0.5)
			if iqr := quantile.Sorted(col, 0.75) - quantile.Sorted(col, 0.25); iqr > 0 {
				scale = iqr
			}
		}
		if !(scale > 0) || math.IsInf(scale, 1) {
			s.Dropped = append(s.Dropped, name)
			continue
		}
		wt, ok := weights[name]
		if !ok {
			wt = 1
		}
		s.Names = append(s.Names, name)
		s.Center = append(s.Center, center)
		s.Scale = append(s.Scale, scale)
		s.Weight = append(s.Weight, wt)
	}
	if len(s.Names) == 0 {
		return nil, fmt.Errorf("features: every feature is constant or undefined (%s)", strings.Join(s.Dropped, ", "))
	}
	return s, nil
}

// meanStd is the mean and sample standard deviation (denominator n−1) of
// x, with gonum's corrected two-pass sum; the deviation is NaN for fewer
// than two values and exactly 0 for a constant.
func meanStd(x []float64) (mean, std float64) {
	if len(x) == 0 {
		return math.NaN(), math.NaN()
	}
	constant := true
	for _, v := range x {
		mean += v
		constant = constant && v == x[0]
	}
	n := float64(len(x))
	mean /= n
	if len(x) < 2 {
		return mean, math.NaN()
	}
	if constant {
		return x[0], 0
	}
	var sd, sdd float64
	for _, v := range x {
		d := v - mean
		sd += d
		sdd += d * d
	}
	return mean, math.Sqrt(max(0, (sdd-sd*sd/n)/(n-1)))
}

// Transform scales the windows of t: one row per window, one column per
// kept feature in s.Names order, holding (v − Center)·Weight/Scale. A NaN
// (undefined) value becomes 0, the centre, so that it pulls a window
// neither way. Features of t that s does not keep are ignored; a feature s
// keeps that t lacks is an error. Each window's Scaled field becomes a view
// of its row.
func (s *Scaler) Transform(t *Table) (*mat.Dense, error) {
	if t == nil || len(t.Windows) == 0 {
		return nil, errors.New("features: no windows to scale")
	}
	if len(s.Names) == 0 || len(s.Center) != len(s.Names) || len(s.Scale) != len(s.Names) || len(s.Weight) != len(s.Names) {
		return nil, fmt.Errorf("features: malformed normalisation: %d names, %d centres, %d scales, %d weights",
			len(s.Names), len(s.Center), len(s.Scale), len(s.Weight))
	}
	index := make(map[string]int, len(t.Names))
	for j, name := range t.Names {
		index[name] = j
	}
	cols := make([]int, len(s.Names))
	var missing []string
	for i, name := range s.Names {
		j, ok := index[name]
		if !ok {
			missing = append(missing, name)
		}
		cols[i] = j
	}
	if len(missing) > 0 {
		return nil, fmt.Errorf("features: the table lacks features %s", strings.Join(missing, ", "))
	}
	out := mat.NewDense(len(t.Windows), len(s.Names), nil)
	for r := range t.Windows {
		w := &t.Windows[r]
		row := out.RawRowView(r)
		for i, j := range cols {
			if v := w.Values[j]; !math.IsNaN(v) {
				row[i] = (v - s.Center[i]) / s.Scale[i] * s.Weight[i]
			}
		}
		w.Scaled = row
	}
	return out, nil
}
