package model

import (
	"errors"
	"fmt"
	"slices"
)

// Conditions is the label knowledge a model carries: for every unit, how
// many of the windows it won were marked with each label by an events file,
// and how many were marked by none. Package events fills and reads it.
type Conditions struct {
	Labels []string // sorted, distinct, not empty
	// Counts holds, for each unit, len(Labels)+1 window counts: one per
	// label, then the windows no event marked.
	Counts [][]int
	Span   string // the rule that marked the windows, in words
	Events int    // events that marked at least one window
}

// check verifies that c fits a map of units units; a nil c is fine.
func (c *Conditions) check(units int) error {
	if c == nil {
		return nil
	}
	if len(c.Counts) != units {
		return fmt.Errorf("conditions: label counts for %d units, the map has %d", len(c.Counts), units)
	}
	for i, l := range c.Labels {
		if l == "" {
			return errors.New("conditions: an empty label")
		}
		if i > 0 && c.Labels[i-1] >= l {
			return fmt.Errorf("conditions: labels not sorted and distinct at %q", l)
		}
	}
	for u, row := range c.Counts {
		if len(row) != len(c.Labels)+1 {
			return fmt.Errorf("conditions: unit %d has %d counts, want %d", u, len(row), len(c.Labels)+1)
		}
		if slices.ContainsFunc(row, func(n int) bool { return n < 0 }) {
			return fmt.Errorf("conditions: unit %d has a negative count", u)
		}
	}
	return nil
}
