package score

// Covering returns the segment covering of one sequence of windows in time
// order (Arbeláez et al. 2011; van den Burg and Williams 2020): with the
// true segments A and the found segments A′ (maximal runs of one label),
//
//	C = 1/T · Σ_A |A| · max_A′ |A ∩ A′| / |A ∪ A′|,
//
// T being the number of windows. It is 1 when the segments are the same,
// whatever the labels, and 1 for an empty sequence. It panics when the
// sequences differ in length.
func Covering(truth, pred []int) float64 {
	if len(truth) != len(pred) {
		panic("score: sequences of different lengths")
	}
	if len(truth) == 0 {
		return 1
	}
	return coveredWindows(truth, pred) / float64(len(truth))
}

// coveredWindows is Σ_A |A| · max_A′ J(A, A′), the covering before it is
// divided by the length, so that sites can be pooled.
func coveredWindows(truth, pred []int) float64 {
	ts, ps := segments(truth), segments(pred)
	sum := 0.0
	k := 0 // the first found segment that may overlap the true one
	for _, a := range ts {
		for k < len(ps) && ps[k].end <= a.start {
			k++
		}
		best := 0.0
		for q := k; q < len(ps) && ps[q].start < a.end; q++ {
			p := ps[q]
			inter := min(a.end, p.end) - max(a.start, p.start)
			union := max(a.end, p.end) - min(a.start, p.start)
			best = max(best, float64(inter)/float64(union))
		}
		sum += float64(a.end-a.start) * best
	}
	return sum
}

// segment is a run of windows [start, end).
type segment struct{ start, end int }

// segments returns the maximal runs of one label.
func segments(labels []int) []segment {
	var s []segment
	for i := range labels {
		if i == 0 || labels[i] != labels[i-1] {
			s = append(s, segment{i, i + 1})
		} else {
			s[len(s)-1].end++
		}
	}
	return s
}
