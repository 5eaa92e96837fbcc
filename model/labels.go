package model

import (
	"fmt"
	"slices"
	"unicode"
	"unicode/utf8"

	"github.com/kinmap/kinmap/mapper"
)

// The statuses a user gives a regime (mapper.Regime.Status); "" means none given.
const (
	StatusNormal = "normal" // the plant as it should run
	StatusWatch  = "watch"  // worth a look, not yet a fault
	StatusFault  = "fault"  // a state the plant should not be in
)

// MaxNameLen is the longest regime name, in characters: a name is a label
// for a legend and a table cell, not a note.
const MaxNameLen = 60

// Statuses returns the statuses a regime can carry, mildest first.
func Statuses() []string { return []string{StatusNormal, StatusWatch, StatusFault} }

// CheckLabel reports whether name and status can label a regime: a name
// of valid UTF-8 without control characters, of at most MaxNameLen
// characters and without space at either end, and a status of Statuses or
// "". Both may be empty.
func CheckLabel(name, status string) error {
	switch {
	case !utf8.ValidString(name):
		return fmt.Errorf("name %q is not valid UTF-8", name)
	case utf8.RuneCountInString(name) > MaxNameLen:
		return fmt.Errorf("name %q is longer than %d characters", name, MaxNameLen)
	case len(name) > 0 && (unicode.IsSpace(rune(name[0])) || unicode.IsSpace(rune(name[len(name)-1]))):
		return fmt.Errorf("name %q starts or ends with a space", name)
	case status != "" && !slices.Contains(Statuses(), status):
		return fmt.Errorf("status %q: want normal, watch, fault or nothing", status)
	}
	for _, r := range name {
		if unicode.IsControl(r) {
			return fmt.Errorf("name %q holds a control character", name)
		}
	}
	return nil
}

// carryLabels gives every regime of next the name and status of the regime
// of prev with the same ID. Called after matchRegimes and Renumber, it
// makes a label follow its regime: a regime matched to a previous one
// carries that one's number, hence its label, whether it was renumbered,
// is the matched part of a split or is what a merge left; a new regime
// (the other parts of a split among them) has a number no previous regime
// had and starts unlabelled; a regime that is gone takes its label with
// it.
func carryLabels(prev, next []mapper.Regime) {
	byID := make(map[int]*mapper.Regime, len(prev))
	for i := range prev {
		byID[prev[i].ID] = &prev[i]
	}
	for i := range next {
		next[i].Name, next[i].Status = "", ""
		if p, ok := byID[next[i].ID]; ok {
			next[i].Name, next[i].Status = p.Name, p.Status
		}
	}
}

// Labelled reports whether some regime has a name or a status.
func Labelled(regs []mapper.Regime) bool {
	return slices.ContainsFunc(regs, func(r mapper.Regime) bool { return r.Name != "" || r.Status != "" })
}
