package model

import (
	"fmt"
	"strings"
	"testing"

	"github.com/kinmap/kinmap/mapper"
)

func TestCheckLabel(t *testing.T) {
	for _, tc := range []struct {
		name, status string
		err          string // "" for none
	}{
		{"", "", ""},
		{"baseline", StatusNormal, ""},
		{"Pumpe läuft – Nennlast", StatusWatch, ""},
		{strings.Repeat("x", MaxNameLen), StatusFault, ""},
		{strings.Repeat("x", MaxNameLen+1), "", "longer than"},
		{" baseline", "", "space"},
		{"baseline\t", "", "space"},
		{"a\nb", "", "control character"},
		{"a\x00b", "", "control character"},
		{"a\xffb", "", "UTF-8"},
		{"", "Normal", "want normal, watch, fault"},
		{"", "faulty", "want normal, watch, fault"},
	} {
		err := CheckLabel(tc.name, tc.status)
		if (err == nil) != (tc.err == "") || err != nil && !strings.Contains(err.Error(), tc.err) {
			t.Errorf("CheckLabel(%q, %q) = %v, want %q", tc.name, tc.status, err, tc.err)
		}
	}
}

// Labels follow the regime numbers that matchRegimes gives: the new
// regime nearest to a labelled one takes its number and its label, the
// other part of the split gets a new number and no label.
func TestCarryLabelsThroughSplit(t *testing.T) {
	prev := []mapper.Regime{
		{ID: 1, Centroid: []float64{0, 0}, Name: "baseline", Status: StatusNormal},
		{ID: 2, Centroid: []float64{10, 0}, Name: "standby", Status: StatusWatch},
	}
	// Regime 2 splits into two near (10, 0); the numbers from derivation
	// are scrambled, as they are after a fresh grouping.
	next := []mapper.Regime{
		{ID: 1, Centroid: []float64{10.2, 0}, Name: "stale"},
		{ID: 2, Centroid: []float64{0.1, 0}},
		{ID: 3, Centroid: []float64{11, 3}},
	}
	ids, changes, err := matchRegimes(prev, next)
	if err != nil {
		t.Fatal(err)
	}
	for i := range next {
		next[i].ID = ids[i]
	}
	carryLabels(prev, next)
	got := map[int]string{}
	for _, g := range next {
		got[g.ID] = g.Name + "/" + g.Status
	}
	want := map[int]string{1: "baseline/normal", 2: "standby/watch", 3: "/"}
	if fmt.Sprint(got) != fmt.Sprint(want) {
		t.Errorf("labels %v, want %v; changes %+v", got, want, changes)
	}
	split := false
	for _, c := range changes {
		split = split || c.Kind == ChangeSplit && fmt.Sprint(c.From, c.To) == "[2] [2 3]"
	}
	if !split {
		t.Errorf("changes %+v, want regime 2 split into 2 and 3", changes)
	}
	if !Labelled(prev) || Labelled(next[2:]) {
		t.Error("Labelled is wrong")
	}
}
