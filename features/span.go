package features

import "time"

// Span returns the earliest start and the latest end of the windows ws;
// zero times when ws is empty.
func Span(ws []Window) (first, last time.Time) {
	for i, w := range ws {
		if i == 0 || w.Start.Before(first) {
			first = w.Start
		}
		if i == 0 || w.End.After(last) {
			last = w.End
		}
	}
	return first, last
}
