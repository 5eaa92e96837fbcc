package mapper

import "fmt"

// LimitError reports settings or a model beyond a stated limit of the
// package, found before any memory is set aside for them.
type LimitError struct {
	What  string  // what is too large, such as "lattice 1000x1000"
	Value float64 // its size
	Limit float64 // the largest size allowed
	Unit  string  // unit of Value and Limit, such as "units"
}

func (e *LimitError) Error() string {
	return fmt.Sprintf("mapper: %s: %.0f %s exceed the limit of %.0f", e.What, e.Value, e.Unit, e.Limit)
}
