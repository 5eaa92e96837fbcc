package events

import (
	"slices"

	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/model"
)

// Count returns the label counts of the windows of ws on each of units
// units: a window counts on its Unit under its Marked label ("" for none).
// Without any label every window counts as unmarked, evidence that Merge
// adds to a model's labels.
func Count(units int, ws []features.Window) *model.Conditions {
	var names []string
	for _, w := range ws {
		if w.Marked != "" && !slices.Contains(names, w.Marked) {
			names = append(names, w.Marked)
		}
	}
	slices.Sort(names)
	c := &model.Conditions{Labels: names, Counts: make([][]int, units)}
	for u := range c.Counts {
		c.Counts[u] = make([]int, len(names)+1)
	}
	for _, w := range ws {
		c.Counts[w.Unit][column(c, w.Marked)]++
	}
	return c
}

// column returns the column of label in the counts of c: its index in
// c.Labels, or len(c.Labels), the unmarked windows' column, for "" and
// for a label c lacks.
func column(c *model.Conditions, label string) int {
	if i, ok := slices.BinarySearch(c.Labels, label); ok && label != "" {
		return i
	}
	return len(c.Labels)
}

// Merge returns the knowledge of a and b together on a map of the same
// units: the union of their labels and the sum of their counts. Either may
// be nil. Span and Events are b's when b is set, with Events summed.
func Merge(a, b *model.Conditions) *model.Conditions {
	switch {
	case a == nil && b == nil:
		return nil
	case a == nil:
		return b
	case b == nil:
		return a
	}
	names := slices.Concat(a.Labels, b.Labels)
	slices.Sort(names)
	names = slices.Compact(names)
	out := &model.Conditions{Labels: names, Counts: make([][]int, len(a.Counts)), Span: b.Span, Events: a.Events + b.Events}
	for u := range out.Counts {
		row := make([]int, len(names)+1)
		for _, src := range []*model.Conditions{a, b} {
			for j, n := range src.Counts[u] {
				if j < len(src.Labels) {
					row[column(out, src.Labels[j])] += n
				} else {
					row[len(names)] += n
				}
			}
		}
		out.Counts[u] = row
	}
	return out
}

// ByRegime returns the label counts of each regime (the sum over its
// units) by regime ID: the regime × label table of the report, columns as
// in c.Counts.
func ByRegime(c *model.Conditions, unitRegime []int) map[int][]int {
	out := make(map[int][]int)
	for u, id := range unitRegime {
		row := out[id]
		if row == nil {
			row = make([]int, len(c.Labels)+1)
			out[id] = row
		}
		for j, n := range c.Counts[u] {
			row[j] += n
		}
	}
	return out
}
