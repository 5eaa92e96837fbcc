package features

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"os/exec"
	"slices"
	"strings"
	"testing"
	"time"

	"github.com/kinmap/kinmap/ingest"
	"github.com/kinmap/kinmap/internal/tooltest"
	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat"
)

// gappy returns an irregular, gappy two-channel site over three days:
// readings about every 10 minutes with jitter, 25 % dropped at random, an
// outage of channel b, a stuck stretch of a, and b sharing most of a's
// instants so that the pair correlation has material.
func gappy(seed uint64) *ingest.SiteData {
	rng := rand.New(rand.NewPCG(seed, 2))
	start := time.Date(2024, 5, 1, 0, 0, 0, 0, time.UTC)
	var a, b ingest.Series
	for i := range 3 * 144 {
		ti := start.Add(time.Duration(i)*10*time.Minute + time.Duration(rng.IntN(120))*time.Second)
		h := float64(ti.Hour()) + float64(ti.Minute())/60
		va := 10 + 3*math.Sin(2*math.Pi*h/24) + rng.NormFloat64()
		if i >= 200 && i < 215 {
			va = 7.25 // stuck
		}
		if rng.Float64() < 0.75 {
			a.Times = append(a.Times, ti.UnixNano())
			a.Values = append(a.Values, va)
		}
		if (i < 100 || i > 130) && rng.Float64() < 0.8 {
			b.Times = append(b.Times, ti.UnixNano())
			b.Values = append(b.Values, 0.5*va+rng.NormFloat64())
		}
	}
	return &ingest.SiteData{ID: "s1", Series: map[string]ingest.Series{"a": a, "b": b}}
}

func fullConfig() Config {
	return Config{Window: 24 * time.Hour, Features: "full", Pairs: true}
}

// Every stat that gonum/stat also computes must agree with it on the same
// samples: gonum as an independent reference library (stat.Mean,
// stat.StdDev with denominator n−1, floats.Min/Max, stat.Quantile,
// stat.LinearRegression, stat.Correlation, and mat's QR least squares).
// acf1 is the textbook sample autocorrelation r₁ = c₁/c₀, with
// c_k = Σ_{t=1}^{n−k} (x_t − x̄)(x_{t+k} − x̄) (G. E. P. Box and
// G. M. Jenkins, Time Series Analysis: Forecasting and Control, the
// estimate of the autocorrelation function; from memory), here from
// stat.Mean and floats.Dot of the lagged deviations. flat is counted from
// its documented definition. period and period_share have no gonum
// counterpart short of redoing the regularisation; TestSpectrumFindsPeriod
// checks them on a signal with a known answer.
func TestStatsAgreeWithGonum(t *testing.T) {
	sd := gappy(1)
	tab, err := Extract(dataset(sd), fullConfig())
	if err != nil {
		t.Fatal(err)
	}
	if len(tab.Windows) != 3 {
		t.Fatalf("%d windows, want 3", len(tab.Windows))
	}
	for _, w := range tab.Windows {
		for _, ch := range []string{"a", "b"} {
			times, x := inWindow(sd.Series[ch], w)
			v := func(stat string) float64 { return value(t, tab, w, ch+"."+stat) }
			sorted := slices.Clone(x)
			slices.Sort(sorted)
			hours := make([]float64, len(times))
			for i, ti := range times {
				hours[i] = float64(ti-w.Start.UnixNano()) / float64(time.Hour)
			}
			_, slope := stat.LinearRegression(hours, x, nil, false)
			dev := slices.Clone(x)
			floats.AddConst(-stat.Mean(x, nil), dev)
			var repeats int
			for i := 1; i < len(x); i++ {
				if x[i] == x[i-1] {
					repeats++
				}
			}
			checks := []struct {
				stat string
				want float64
			}{
				{"mean", stat.Mean(x, nil)},
				{"std", stat.StdDev(x, nil)},
				{"min", floats.Min(x)},
				{"max", floats.Max(x)},
				{"p05", gonumType7(sorted, 0.05)},
				{"p50", gonumType7(sorted, 0.50)},
				{"p95", gonumType7(sorted, 0.95)},
				{"trend", slope},
				{"acf1", floats.Dot(dev[:len(dev)-1], dev[1:]) / floats.Dot(dev, dev)},
				{"flat", float64(repeats) / float64(len(x)-1)},
				{"count", float64(len(x))},
			}
			for _, c := range checks {
				if got := v(c.stat); !near(got, c.want, 1e-9) {
					t.Errorf("%s %s.%s = %v, gonum gives %v", w.Start.Format(time.DateOnly), ch, c.stat, got, c.want)
				}
			}
			amp, phase := lsqHarmonic(t, times, x)
			if got := v("day_amp"); !near(got, amp, 1e-7) {
				t.Errorf("%s %s.day_amp = %v, gonum/mat least squares gives %v", w.Start.Format(time.DateOnly), ch, got, amp)
			}
			if got := v("day_phase"); !near(got, phase, 1e-7) {
				t.Errorf("%s %s.day_phase = %v, gonum/mat least squares gives %v", w.Start.Format(time.DateOnly), ch, got, phase)
			}
		}
		ta, xa := inWindow(sd.Series["a"], w)
		tb, xb := inWindow(sd.Series["b"], w)
		var ma, mb []float64
		for i, ti := range ta {
			if j := slices.Index(tb, ti); j >= 0 {
				ma, mb = append(ma, xa[i]), append(mb, xb[j])
			}
		}
		if len(ma) < 50 {
			t.Fatalf("only %d matching instants; the fixture should share most", len(ma))
		}
		if got, want := value(t, tab, w, "a~b.corr"), stat.Correlation(ma, mb, nil); !near(got, want, 1e-9) {
			t.Errorf("%s a~b.corr = %v, gonum stat.Correlation gives %v", w.Start.Format(time.DateOnly), got, want)
		}
	}
}

// gonumType7 computes definition 7 of Hyndman & Fan (1996) with gonum's
// stat.Quantile(LinInterp), which is their definition 4 (h = np, linear
// between order statistics). Both interpolate the order statistics linearly
// at a position h; definition 7 puts it at h = (n−1)p + 1, which definition
// 4 reaches at p' = ((n−1)p + 1)/n.
func gonumType7(sorted []float64, p float64) float64 {
	n := float64(len(sorted))
	return stat.Quantile(((n-1)*p+1)/n, stat.LinInterp, sorted, nil)
}

// lsqHarmonic fits a + b cos + c sin of the UTC time of day by QR least
// squares with gonum/mat and returns the amplitude and peak hour.
func lsqHarmonic(t *testing.T, times []int64, x []float64) (amp, phase float64) {
	t.Helper()
	a := mat.NewDense(len(x), 3, nil)
	for i, ti := range times {
		tod := float64(ti%int64(24*time.Hour)) / float64(time.Hour)
		a.Set(i, 0, 1)
		a.Set(i, 1, math.Cos(2*math.Pi*tod/24))
		a.Set(i, 2, math.Sin(2*math.Pi*tod/24))
	}
	var beta mat.Dense
	if err := beta.Solve(a, mat.NewVecDense(len(x), x)); err != nil {
		t.Fatal(err)
	}
	b, c := beta.At(1, 0), beta.At(2, 0)
	return math.Hypot(b, c), math.Mod(math.Atan2(c, b)*24/(2*math.Pi)+24, 24)
}

// Definitions checked by hand on a small example: flat counts readings equal
// to their predecessor over n−1 (here 3 of 5), count is n, a constant has
// std 0 and undefined (NaN) acf1, and one reading has NaN std.
func TestStatsSmallCases(t *testing.T) {
	w := newWorker()
	sp := func(vals ...float64) span {
		s := span{start: 0, end: int64(24 * time.Hour), step: int64(time.Hour)}
		for i, v := range vals {
			s.times = append(s.times, int64(i)*int64(time.Hour))
			s.vals = append(s.vals, v)
		}
		return s
	}
	w.channelStats(sp(1, 1, 2, 2, 2, 3), fullSet)
	if w.vals[statFlat] != 0.6 || w.vals[statCount] != 6 {
		t.Errorf("flat = %v, count = %v; want 0.6, 6", w.vals[statFlat], w.vals[statCount])
	}
	w.channelStats(sp(0.1, 0.1, 0.1), fullSet)
	if w.vals[statStd] != 0 || !math.IsNaN(w.vals[statAcf1]) || w.vals[statFlat] != 1 || !math.IsNaN(w.vals[statPeriod]) {
		t.Errorf("constant: std %v acf1 %v flat %v period %v; want 0, NaN, 1, NaN",
			w.vals[statStd], w.vals[statAcf1], w.vals[statFlat], w.vals[statPeriod])
	}
	w.channelStats(sp(4), fullSet)
	if !math.IsNaN(w.vals[statStd]) || !math.IsNaN(w.vals[statTrend]) || w.vals[statP95] != 4 || w.vals[statMean] != 4 {
		t.Errorf("one reading: std %v trend %v p95 %v mean %v; want NaN, NaN, 4, 4",
			w.vals[statStd], w.vals[statTrend], w.vals[statP95], w.vals[statMean])
	}
	w.channelStats(sp(), fullSet)
	if w.vals[statCount] != 0 || !math.IsNaN(w.vals[statMean]) {
		t.Errorf("no reading: count %v mean %v; want 0, NaN", w.vals[statCount], w.vals[statMean])
	}
	// Channels sharing all their instants (gonum stat.Correlation as the reference).
	same := []int64{1, 2, 3, 4, 5}
	x, y := []float64{1, 3, 2, 5, 4}, []float64{2, 2, 1, 6, 3}
	if got, want := w.corr(same, x, same, y), stat.Correlation(x, y, nil); !near(got, want, 1e-12) {
		t.Errorf("corr on shared instants = %v, gonum gives %v", got, want)
	}
	if got := w.corr([]int64{1, 2}, []float64{1, 2}, []int64{1, 2}, []float64{3, 1}); !math.IsNaN(got) {
		t.Errorf("corr of 2 matches = %v, want NaN", got)
	}
	if got := w.corr([]int64{1, 2, 3}, []float64{1, 1, 1}, []int64{1, 2, 3}, []float64{3, 1, 2}); !math.IsNaN(got) {
		t.Errorf("corr with a constant = %v, want NaN", got)
	}
}

// A 24 h sine of amplitude 2.5 peaking at 15.5 h, with noise of sd 0.05 and
// 30 % of its 10-minute samples removed at random, is recovered within 1 %
// in amplitude and peak hour. The least-squares harmonic is the classical
// estimator of Bloomfield, "Fourier Analysis of Time Series", ch. 2, which
// needs no regular sampling (from memory); 1 % is the project's requirement.
func TestHarmonicRecoversSine(t *testing.T) {
	const amp, peak = 2.5, 15.5
	rng := rand.New(rand.NewPCG(7, 7))
	start := time.Date(2024, 6, 3, 0, 0, 0, 0, time.UTC)
	var s ingest.Series
	for i := range 7 * 144 {
		if rng.Float64() < 0.3 {
			continue
		}
		ti := start.Add(time.Duration(i) * 10 * time.Minute)
		h := float64(i%144) / 6
		s.Times = append(s.Times, ti.UnixNano())
		s.Values = append(s.Values, 40+amp*math.Cos(2*math.Pi*(h-peak)/24)+0.05*rng.NormFloat64())
	}
	for _, tz := range []string{"", "Europe/Berlin"} {
		cfg := Config{Window: 7 * 24 * time.Hour, Features: "day_amp,day_phase", TZ: tz}
		if tz != "" {
			// Shift the readings so that the peak falls at 15.5 h on Berlin's
			// summer clock (UTC+2).
			s = shifted(s, -2*time.Hour)
		}
		tab, err := Extract(dataset(&ingest.SiteData{ID: "x", Series: map[string]ingest.Series{"v": s}}), cfg)
		if err != nil {
			t.Fatal(err)
		}
		if len(tab.Windows) != 1 {
			t.Fatalf("TZ %q: %d windows, want the one week", tz, len(tab.Windows))
		}
		w := tab.Windows[0]
		gotAmp, gotPeak := value(t, tab, w, "v.day_amp"), value(t, tab, w, "v.day_phase")
		if math.Abs(gotAmp-amp) > 0.01*amp || math.Abs(gotPeak-peak) > 0.01*peak {
			t.Errorf("TZ %q: amplitude %v, peak %v h; want %v, %v within 1 %%", tz, gotAmp, gotPeak, amp, peak)
		}
	}
}

func shifted(s ingest.Series, d time.Duration) ingest.Series {
	out := ingest.Series{Values: s.Values}
	for _, t := range s.Times {
		out.Times = append(out.Times, t+int64(d))
	}
	return out
}

// The FFT finds the period of a known signal: 6 h and 2 h sines, the 6 h
// one stronger, sampled every 10 minutes with 20 % of the samples missing.
// The 6 h component carries a² / (a² + b²) of the energy of the pair of
// sines (Parseval's theorem), here 16/17.
func TestSpectrumFindsPeriod(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 3))
	start := time.Date(2024, 1, 8, 0, 0, 0, 0, time.UTC)
	full := regular(start, 10*time.Minute, 144, func(ti time.Time) float64 {
		h := ti.Sub(start).Hours()
		return 5 + 4*math.Sin(2*math.Pi*h/6) + math.Cos(2*math.Pi*h/2)
	})
	var gaps ingest.Series
	for i := range full.Times {
		if rng.Float64() >= 0.2 {
			gaps.Times = append(gaps.Times, full.Times[i])
			gaps.Values = append(gaps.Values, full.Values[i])
		}
	}
	for name, s := range map[string]ingest.Series{"regular": full, "gappy": gaps} {
		tab, err := Extract(dataset(&ingest.SiteData{ID: "x", Series: map[string]ingest.Series{"v": s}}),
			Config{Window: 24 * time.Hour, Features: "period,period_share"})
		if err != nil {
			t.Fatal(err)
		}
		w := tab.Windows[0]
		period, share := value(t, tab, w, "v.period"), value(t, tab, w, "v.period_share")
		if period != 6 {
			t.Errorf("%s: period %v h, want 6", name, period)
		}
		// Linear interpolation over the gaps damps the 2 h component, so the
		// gappy series may carry more than 16/17 at 6 h, never less by much.
		if name == "regular" && math.Abs(share-16.0/17) > 1e-9 || name == "gappy" && share < 16.0/17-0.02 {
			t.Errorf("%s: share %v, want 16/17 = %v", name, share, 16.0/17)
		}
	}
}

// The trend of a known ramp: 0.75 units per hour over an irregular, gappy
// day is recovered exactly, up to rounding: readings that lie on a line are
// fitted by it with zero residual, so least squares returns that line
// (common practice, no source).
func TestTrendOfRamp(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 5))
	start := time.Date(2024, 1, 8, 0, 0, 0, 0, time.UTC)
	var s ingest.Series
	for ti := start; ti.Before(start.Add(24 * time.Hour)); ti = ti.Add(time.Duration(1+rng.IntN(40)) * time.Minute) {
		s.Times = append(s.Times, ti.UnixNano())
		s.Values = append(s.Values, -3+0.75*ti.Sub(start).Hours())
	}
	tab, err := Extract(dataset(&ingest.SiteData{ID: "x", Series: map[string]ingest.Series{"v": s}}),
		Config{Window: 24 * time.Hour, Features: "trend"})
	if err != nil {
		t.Fatal(err)
	}
	if got := value(t, tab, tab.Windows[0], "v.trend"); math.Abs(got-0.75) > 1e-9 {
		t.Errorf("trend %v per hour, want 0.75", got)
	}
}

// The lag-1 autocorrelation of a simulated AR(1) series x_t = φ x_{t−1} + e_t
// estimates φ with standard error about √((1−φ²)/n): Bartlett's formula for
// an AR(1) (Brockwell & Davis, "Introduction to Time Series and
// Forecasting", Section 2.4, from memory). Each of five seeds must fall
// within 4 standard errors, and so must their mean within 4/√5.
func TestAcf1OfAR1(t *testing.T) {
	for _, phi := range []float64{0.3, 0.8, -0.5} {
		const n = 4000
		var sum float64
		for seed := range uint64(5) {
			rng := rand.New(rand.NewPCG(seed, 11))
			var s ingest.Series
			start := time.Date(2024, 1, 8, 0, 0, 0, 0, time.UTC)
			x := rng.NormFloat64() / math.Sqrt(1-phi*phi)
			for i := range n {
				s.Times = append(s.Times, start.Add(time.Duration(i)*time.Minute).UnixNano())
				s.Values = append(s.Values, x)
				x = phi*x + rng.NormFloat64()
			}
			tab, err := Extract(dataset(&ingest.SiteData{ID: "x", Series: map[string]ingest.Series{"v": s}}),
				Config{Window: 7 * 24 * time.Hour, Features: "acf1,count"})
			if err != nil {
				t.Fatal(err)
			}
			w := tab.Windows[0]
			if c := value(t, tab, w, "v.count"); c != n {
				t.Fatalf("count %v, want %d", c, n)
			}
			r := value(t, tab, w, "v.acf1")
			se := math.Sqrt((1 - phi*phi) / n)
			if math.Abs(r-phi) > 4*se {
				t.Errorf("φ = %v seed %d: acf1 %v, off by %.1f standard errors", phi, seed, r, math.Abs(r-phi)/se)
			}
			sum += r
		}
		se := math.Sqrt((1 - phi*phi) / n / 5)
		if mean := sum / 5; math.Abs(mean-phi) > 4*se {
			t.Errorf("φ = %v: mean acf1 %v, off by %.1f standard errors", phi, mean, math.Abs(mean-phi)/se)
		}
	}
}

// The same samples through numpy (Debian's system python as a second
// reference): mean, std(ddof=1), min, max, percentile (method "linear",
// definition 7 of Hyndman & Fan), polyfit slope, corrcoef, the lag-1
// autocorrelation from its textbook formula and a lstsq harmonic.
func TestStatsAgreeWithNumpy(t *testing.T) {
	py := tooltest.Python(t, "numpy")
	sd := gappy(2)
	tab, err := Extract(dataset(sd), fullConfig())
	if err != nil {
		t.Fatal(err)
	}
	type sample struct {
		T []float64 `json:"t"` // hours since the window start
		D []float64 `json:"d"` // hour of the UTC day
		X []float64 `json:"x"`
	}
	var in []sample
	for _, w := range tab.Windows {
		for _, ch := range []string{"a", "b"} {
			times, x := inWindow(sd.Series[ch], w)
			s := sample{X: x}
			for _, ti := range times {
				s.T = append(s.T, float64(ti-w.Start.UnixNano())/float64(time.Hour))
				s.D = append(s.D, float64(ti%int64(24*time.Hour))/float64(time.Hour))
			}
			in = append(in, s)
		}
	}
	const script = `
import json, sys
import numpy as np
out = []
for s in json.load(sys.stdin):
    x, t, d = np.array(s["x"]), np.array(s["t"]), np.array(s["d"])
    dev = x - x.mean()
    w = 2 * np.pi * d / 24
    a = np.column_stack([np.ones_like(w), np.cos(w), np.sin(w)])
    coef = np.linalg.lstsq(a, x, rcond=None)[0]
    out.append({
        "mean": x.mean(), "std": x.std(ddof=1), "min": x.min(), "max": x.max(),
        "p05": np.percentile(x, 5), "p50": np.percentile(x, 50), "p95": np.percentile(x, 95),
        "trend": np.polyfit(t, x, 1)[0],
        "acf1": float(np.sum(dev[:-1] * dev[1:]) / np.sum(dev * dev)),
        "day_amp": float(np.hypot(coef[1], coef[2])),
        "day_phase": float(np.mod(np.arctan2(coef[2], coef[1]) * 24 / (2 * np.pi), 24)),
    })
json.dump(out, sys.stdout)
`
	raw, _ := json.Marshal(in)
	cmd := exec.Command(py, "-c", script)
	cmd.Stdin = strings.NewReader(string(raw))
	got, err := cmd.Output()
	if err != nil {
		t.Fatalf("numpy: %v", err)
	}
	var want []map[string]float64
	if err := json.Unmarshal(got, &want); err != nil {
		t.Fatal(err)
	}
	i := 0
	for _, w := range tab.Windows {
		for _, ch := range []string{"a", "b"} {
			for stat, wv := range want[i] {
				if gv := value(t, tab, w, ch+"."+stat); !near(gv, wv, 1e-7) {
					t.Errorf("%s %s.%s = %v, numpy gives %v", w.Start.Format(time.DateOnly), ch, stat, gv, wv)
				}
			}
			i++
		}
	}
}
