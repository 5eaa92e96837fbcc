package lattice

import "fmt"

// LimitError reports a lattice beyond MaxUnits, found before any memory is
// set aside for it.
type LimitError struct {
	What  string  // what is too large, such as "1000x1000"
	Value float64 // its size
	Limit float64 // the largest size allowed
	Unit  string  // unit of Value and Limit, such as "units"
}

func (e *LimitError) Error() string {
	return fmt.Sprintf("lattice: %s: %.0f %s exceed the limit of %.0f", e.What, e.Value, e.Unit, e.Limit)
}
