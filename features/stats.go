package features

import (
	"math"
	"slices"
	"time"

	"gonum.org/v1/gonum/dsp/fourier"

	"github.com/kinmap/kinmap/internal/quantile"
	"github.com/kinmap/kinmap/internal/selection"
)

const (
	hourNs = float64(time.Hour)
	dayNs  = int64(24 * time.Hour)
	omega  = 2 * math.Pi / float64(dayNs) // radians per nanosecond of the 24 h harmonic

	// maxGrid bounds the regular grid of the spectrum; a channel sampled
	// more finely is regularised to window/maxGrid instead.
	maxGrid = 1 << 16
)

// worker holds the scratch space of one goroutine, so that windows are
// computed without allocating once the buffers have grown.
type worker struct {
	sorted []float64
	grid   []float64
	hits   []int32
	spec   []complex128
	ffts   map[int]*fourier.FFT
	xs, ys []float64
	diffs  []int64
	vals   [numStats]float64
}

func newWorker() *worker {
	return &worker{ffts: map[int]*fourier.FFT{}}
}

// span is the part of one channel that falls in one window, with what the
// stats need to know about the window.
type span struct {
	times      []int64
	vals       []float64
	start, end int64 // window bounds, instants in Unix ns
	step       int64 // median interval of the channel over the site; 0 when undefined
	clk        clock
	off        int64 // the zone's offset over the whole window, when steady
	steady     bool
}

// channelStats computes the stats in want of one channel over one window
// into w.vals, as the package documentation defines them; stats not asked
// for may be left NaN. std uses gonum's corrected two-pass sum.
func (w *worker) channelStats(s span, want statSet) {
	for i := range w.vals {
		w.vals[i] = math.NaN()
	}
	n := len(s.vals)
	w.vals[statCount] = float64(n)
	if n == 0 {
		return
	}
	var sum, sumT float64
	lo, hi := s.vals[0], s.vals[0]
	flat := 0
	for i, v := range s.vals {
		sum += v
		sumT += float64(s.times[i] - s.start)
		lo = min(lo, v)
		hi = max(hi, v)
		if i > 0 && v == s.vals[i-1] {
			flat++
		}
	}
	fn := float64(n)
	mean := sum / fn
	constant := lo == hi
	if constant {
		mean = lo // no rounding residue, so that deviations are exactly 0
	}
	w.vals[statMean], w.vals[statMin], w.vals[statMax] = mean, lo, hi

	if want&quantileSet != 0 {
		w.sorted = append(w.sorted[:0], s.vals...)
		w.vals[statP05], w.vals[statP50], w.vals[statP95] = quantile.Spread(w.sorted)
	}
	if n < 2 {
		return
	}
	w.vals[statFlat] = float64(flat) / float64(n-1)

	meanT := sumT / fn
	var sd, sdd, sed, see, lag, prev float64
	for i, v := range s.vals {
		d := v - mean
		e := float64(s.times[i]-s.start) - meanT
		sd += d
		sdd += d * d
		sed += e * d
		see += e * e
		if i > 0 {
			lag += prev * d
		}
		prev = d
	}
	w.vals[statStd] = math.Sqrt(max(0, (sdd-sd*sd/fn)/(fn-1)))
	if see > 0 {
		w.vals[statTrend] = sed / see * hourNs
	}
	if !constant {
		w.vals[statAcf1] = lag / sdd
	}
	if want&harmonicSet != 0 {
		w.vals[statDayAmp], w.vals[statDayPhase] = harmonic(s, mean)
	}
	if want&spectrumSet != 0 && !constant {
		w.vals[statPeriod], w.vals[statPeriodShare] = w.spectrum(s)
	}
}

// harmonic fits v = a + b·cos ωτ + c·sin ωτ by least squares, where τ is the
// time of day of each reading on the zone's clock and ω = 2π/24 h, and
// returns the amplitude √(b²+c²) and the hour of the peak, atan2(c, b)/ω,
// in [0, 24). Gaps do no harm as long as the readings spread over enough of
// the day to tell the harmonic from the level: with fewer than three
// readings, or degenerate normal equations, both are NaN. The phase of a
// zero amplitude is NaN.
func harmonic(s span, mean float64) (amp, phase float64) {
	n := len(s.vals)
	if n < 3 {
		return math.NaN(), math.NaN()
	}
	// cos and sin of successive readings come from rotating the previous
	// angle; a sine and cosine are computed afresh only when the interval
	// between readings changes.
	var sc, ss, scc, sss, scs, sy, syc, sys float64
	var c, sn, dc, ds float64
	var prevWall, prevStep int64
	for i, t := range s.times {
		wall := t + s.off
		if !s.steady {
			wall = s.clk.wall(t)
		}
		if i == 0 {
			sn, c = math.Sincos(omega * float64(floorMod(wall, dayNs)))
		} else {
			if step := wall - prevWall; step != prevStep || i == 1 {
				ds, dc = math.Sincos(omega * float64(floorMod(step, dayNs)))
				prevStep = step
			}
			c, sn = c*dc-sn*ds, sn*dc+c*ds
		}
		prevWall = wall
		y := s.vals[i] - mean
		sc += c
		ss += sn
		scc += c * c
		sss += sn * sn
		scs += c * sn
		sy += y
		syc += y * c
		sys += y * sn
	}
	fn := float64(n)
	ccc := scc - sc*sc/fn
	css := sss - ss*ss/fn
	ccs := scs - sc*ss/fn
	cyc := syc - sy*sc/fn
	cys := sys - sy*ss/fn
	det := ccc*css - ccs*ccs
	if !(det > 1e-9*fn*fn) {
		return math.NaN(), math.NaN()
	}
	b := (cyc*css - cys*ccs) / det
	cc := (cys*ccc - cyc*ccs) / det
	amp = math.Hypot(b, cc)
	if amp == 0 {
		return amp, math.NaN()
	}
	phase = math.Mod(math.Atan2(cc, b)/(omega*hourNs)+24, 24)
	return amp, phase
}

// spectrum regularises the readings to the channel's median step (readings
// go to the nearest grid point and are averaged there; empty points are
// interpolated linearly between their filled neighbours and held constant
// before the first and after the last), removes the mean and returns the
// period in hours of the strongest Fourier component and the share of the
// spectral energy (DC excluded, both halves of the spectrum counted) it
// carries. Ties go to the longer period. Both are NaN without a step, with
// fewer than two readings or a grid of fewer than four points.
func (w *worker) spectrum(s span) (period, share float64) {
	length := s.end - s.start
	step := s.step
	if step <= 0 || len(s.vals) < 2 {
		return math.NaN(), math.NaN()
	}
	if length/step > maxGrid {
		step = (length + maxGrid - 1) / maxGrid
	}
	n := int(length / step)
	if n < 4 {
		return math.NaN(), math.NaN()
	}
	w.grid = slices.Grow(w.grid[:0], n)[:n]
	w.hits = slices.Grow(w.hits[:0], n)[:n]
	clear(w.grid)
	clear(w.hits)
	for i, t := range s.times {
		j := min(int((t-s.start+step/2)/step), n-1)
		w.grid[j] += s.vals[i]
		w.hits[j]++
	}
	last := -1
	for j := range n {
		if w.hits[j] == 0 {
			continue
		}
		w.grid[j] /= float64(w.hits[j])
		if last < 0 {
			for k := range j {
				w.grid[k] = w.grid[j]
			}
		} else {
			for k := last + 1; k < j; k++ {
				f := float64(k-last) / float64(j-last)
				w.grid[k] = w.grid[last] + f*(w.grid[j]-w.grid[last])
			}
		}
		last = j
	}
	for k := last + 1; k < n; k++ {
		w.grid[k] = w.grid[last]
	}
	var mean float64
	for _, v := range w.grid {
		mean += v
	}
	mean /= float64(n)
	for j := range w.grid {
		w.grid[j] -= mean
	}

	fft := w.ffts[n]
	if fft == nil {
		fft = fourier.NewFFT(n)
		w.ffts[n] = fft
	}
	w.spec = slices.Grow(w.spec[:0], n/2+1)[:n/2+1]
	coef := fft.Coefficients(w.spec, w.grid)
	var total, best float64
	bestK := 0
	for k := 1; k <= n/2; k++ {
		p := real(coef[k])*real(coef[k]) + imag(coef[k])*imag(coef[k])
		if 2*k != n {
			p *= 2
		}
		total += p
		if p > best {
			best, bestK = p, k
		}
	}
	if bestK == 0 {
		return math.NaN(), math.NaN()
	}
	return float64(n) * float64(step) / float64(bestK) / hourNs, best / total
}

// corr is the Pearson correlation of two channels over the readings they
// share the same instant of; NaN with fewer than three such readings or
// when either is constant over them.
func (w *worker) corr(ta []int64, va []float64, tb []int64, vb []float64) float64 {
	xs, ys := va, vb
	if !slices.Equal(ta, tb) { // channels of a wide dump share their instants
		w.xs, w.ys = w.xs[:0], w.ys[:0]
		for i, j := 0, 0; i < len(ta) && j < len(tb); {
			switch {
			case ta[i] < tb[j]:
				i++
			case ta[i] > tb[j]:
				j++
			default:
				w.xs = append(w.xs, va[i])
				w.ys = append(w.ys, vb[j])
				i++
				j++
			}
		}
		xs, ys = w.xs, w.ys
	}
	n := len(xs)
	if n < 3 {
		return math.NaN()
	}
	var mx, my float64
	for i := range n {
		mx += xs[i]
		my += ys[i]
	}
	mx /= float64(n)
	my /= float64(n)
	var sxx, syy, sxy float64
	xConst, yConst := true, true
	for i := range n {
		dx, dy := xs[i]-mx, ys[i]-my
		sxx += dx * dx
		syy += dy * dy
		sxy += dx * dy
		xConst = xConst && xs[i] == xs[0]
		yConst = yConst && ys[i] == ys[0]
	}
	if xConst || yConst {
		return math.NaN()
	}
	return sxy / math.Sqrt(sxx*syy)
}

// medianStep returns the median interval between successive instants, or 0
// with fewer than two.
func (w *worker) medianStep(times []int64) int64 {
	if len(times) < 2 {
		return 0
	}
	w.diffs = w.diffs[:0]
	for i := 1; i < len(times); i++ {
		w.diffs = append(w.diffs, times[i]-times[i-1])
	}
	m := len(w.diffs) / 2
	if len(w.diffs)%2 == 1 {
		selection.Nth(w.diffs, m)
		return w.diffs[m]
	}
	selection.Nth(w.diffs, m-1)
	lo := w.diffs[m-1]
	return lo + (slices.Min(w.diffs[m:])-lo)/2
}

// floorMod is the remainder of a/b with the sign of b.
func floorMod(a, b int64) int64 {
	m := a % b
	if m < 0 {
		m += b
	}
	return m
}

// floorDiv is a/b rounded towards minus infinity.
func floorDiv(a, b int64) int64 {
	q := a / b
	if (a%b != 0) && ((a < 0) != (b < 0)) {
		q--
	}
	return q
}
