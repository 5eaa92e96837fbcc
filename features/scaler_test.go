package features

import (
	"encoding/json"
	"errors"
	"math"
	"reflect"
	"slices"
	"strings"
	"testing"
	"time"

	"gonum.org/v1/gonum/stat"
)

// table builds a table from columns of values, one per feature.
func table(names []string, cols ...[]float64) *Table {
	t := &Table{Names: names}
	for i := range cols[0] {
		w := Window{Site: "s", Start: time.Unix(int64(i)*3600, 0).UTC()}
		for _, c := range cols {
			w.Values = append(w.Values, c[i])
		}
		t.Windows = append(t.Windows, w)
	}
	return t
}

var nanv = math.NaN()

// Centres and scales agree with gonum: stat.MeanStdDev (denominator n−1)
// for zscore, and the median and quartiles of Hyndman & Fan's definition 7
// through stat.Quantile for robust, on the values that are not NaN.
func TestFitScalerAgreesWithGonum(t *testing.T) {
	x := []float64{3, 1, nanv, 4, 1, 5, 9, 2, 6, 5, 3, 5, nanv}
	y := []float64{2, 7, 1, 8, 2, 8, 1, 8, 2, 8, 4, 5, 9}
	tab := table([]string{"x", "y"}, x, y)
	for _, method := range []string{"zscore", "robust"} {
		s, err := FitScaler(tab, method, nil)
		if err != nil {
			t.Fatal(err)
		}
		for i, col := range [][]float64{x, y} {
			var vals []float64
			for _, v := range col {
				if !math.IsNaN(v) {
					vals = append(vals, v)
				}
			}
			center, scale := stat.MeanStdDev(vals, nil)
			if method == "robust" {
				slices.Sort(vals)
				center = gonumType7(vals, 0.5)
				scale = gonumType7(vals, 0.75) - gonumType7(vals, 0.25)
			}
			if !near(s.Center[i], center, 1e-12) || !near(s.Scale[i], scale, 1e-12) || s.Weight[i] != 1 {
				t.Errorf("%s %s: centre %v scale %v weight %v; gonum gives %v, %v (weight 1)",
					method, s.Names[i], s.Center[i], s.Scale[i], s.Weight[i], center, scale)
			}
		}
	}
}

func TestFitScalerDropsAndWeights(t *testing.T) {
	names := []string{"a.mean", "a.flat", "b.flat", "c.std", "d.count"}
	tab := table(names,
		[]float64{1, 2, 3, 4, 5, 6},
		[]float64{0, 0, 0, 0, 0, 1}, // IQR 0 but varies: kept by robust, scale = std
		[]float64{0, 0, 0, 0, 0, 0}, // constant
		[]float64{nanv, nanv, nanv, nanv, nanv, 2},
		[]float64{nanv, nanv, nanv, nanv, nanv, nanv},
	)
	s, err := FitScaler(tab, "robust", map[string]float64{"a.mean": 2.5, "b.flat": 3})
	if err != nil {
		t.Fatal(err)
	}
	if want := []string{"a.mean", "a.flat"}; !slices.Equal(s.Names, want) {
		t.Errorf("kept %v, want %v", s.Names, want)
	}
	if want := []string{"b.flat", "c.std", "d.count"}; !slices.Equal(s.Dropped, want) {
		t.Errorf("dropped %v, want %v", s.Dropped, want)
	}
	if want := []float64{2.5, 1}; !slices.Equal(s.Weight, want) {
		t.Errorf("weights %v, want %v", s.Weight, want)
	}
	// The sample standard deviation of five 0 and one 1 is √(1/6) (by hand).
	if want := math.Sqrt(1.0 / 6); !near(s.Scale[1], want, 1e-12) || s.Center[1] != 0 {
		t.Errorf("a.flat centre %v scale %v; want 0, %v", s.Center[1], s.Scale[1], want)
	}

	errs := []struct {
		method  string
		weights map[string]float64
		msg     string
	}{
		{"minmax", nil, `unknown normalisation "minmax"`},
		{"zscore", map[string]float64{"z.mean": 1, "a.max": 2}, "weights for unknown features a.max, z.mean"},
		{"zscore", map[string]float64{"a.mean": -1}, "must be finite and non-negative"},
		{"zscore", map[string]float64{"a.mean": math.NaN()}, "must be finite and non-negative"},
	}
	for _, e := range errs {
		_, err := FitScaler(tab, e.method, e.weights)
		if err == nil || !strings.Contains(err.Error(), e.msg) {
			t.Errorf("%s %v: error %v, want one containing %q", e.method, e.weights, err, e.msg)
		}
		if unknown := strings.Contains(e.msg, "unknown features"); errors.Is(err, ErrUnknownName) != unknown {
			t.Errorf("%s %v: errors.Is(%v, ErrUnknownName) is %v, want %v", e.method, e.weights, err, !unknown, unknown)
		}
	}
	if _, err := FitScaler(&Table{Names: names}, "zscore", nil); err == nil {
		t.Error("a table without windows was fitted")
	}
}

func TestTransform(t *testing.T) {
	s := &Scaler{Method: "zscore", Names: []string{"b", "a"}, Center: []float64{10, 1}, Scale: []float64{2, 0.5}, Weight: []float64{1, 3}}
	tab := table([]string{"a", "extra", "b"}, []float64{2, nanv, 0}, []float64{7, 7, 7}, []float64{14, 10, nanv})
	m, err := s.Transform(tab)
	if err != nil {
		t.Fatal(err)
	}
	// (v − centre) / scale · weight, NaN to 0, in s.Names order.
	want := [][]float64{{2, 6}, {0, 0}, {0, -6}}
	for i, row := range want {
		if got := m.RawRowView(i); !slices.Equal(got, row) {
			t.Errorf("row %d = %v, want %v", i, got, row)
		}
	}
	_, err = s.Transform(table([]string{"a", "c"}, []float64{1}, []float64{1}))
	if err == nil || !strings.Contains(err.Error(), "the table lacks features b") {
		t.Errorf("missing feature: error %v", err)
	}
}

// The model stores Config and Scaler as JSON: both must come back equal.
func TestJSONRoundTrip(t *testing.T) {
	cfg := Config{Window: 36 * time.Hour, Stride: 6 * time.Hour, TZ: "Europe/Berlin", MinCoverage: 0.6, Features: "full", Pairs: true}
	s := &Scaler{Method: "robust", Names: []string{"a.mean"}, Center: []float64{1.5}, Scale: []float64{0.25}, Weight: []float64{1}, Dropped: []string{"b.flat"}}
	for _, v := range []any{cfg, s} {
		raw, err := json.Marshal(v)
		if err != nil {
			t.Fatal(err)
		}
		back := reflect.New(reflect.TypeOf(v))
		if err := json.Unmarshal(raw, back.Interface()); err != nil {
			t.Fatal(err)
		}
		if !reflect.DeepEqual(back.Elem().Interface(), v) {
			t.Errorf("%T changed through JSON: %s", v, raw)
		}
	}
}
