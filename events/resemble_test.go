package events

import (
	"reflect"
	"testing"
	"time"

	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/history"
	"github.com/kinmap/kinmap/ingest"
	"github.com/kinmap/kinmap/model"
)

func TestResemble(t *testing.T) {
	var ws []features.Window
	add := func(site string, d int, label string, conf float64) {
		ws = append(ws, features.Window{Site: site, Start: day(d), End: day(d + 1), Condition: label, ConditionConfidence: conf})
	}
	like := func(w *features.Window, conf float64) { w.Condition, w.ConditionConfidence = "failure", conf }
	for d := 1; d <= 10; d++ {
		add("a", d, Unlabelled, 0.9)
		add("b", d, Unlabelled, 0.9)
	}
	// a: the last two of its three recent days look like a failure; b:
	// one, long ago, which is not recent.
	like(&ws[len(ws)-2], 0.9)
	like(&ws[len(ws)-4], 0.6)
	like(&ws[1], 0.9)
	got := Resemble(ws, "failure", 3*24*time.Hour)
	// a's windows ending within 3 days of its last end (day 11): days 7 to
	// 10 end on 8 to 11, so four windows; (0.9 + 0.6) / 4.
	want := []SiteScore{{Site: "a", Score: 1.5 / 4, Windows: 4, Matching: 2, Last: day(11)}}
	if !reflect.DeepEqual(got, want) {
		t.Errorf("got %+v, want %+v", got, want)
	}
}

func TestPrecedents(t *testing.T) {
	past := []history.Window{
		{Site: "x", Start: day(1), End: day(2), Scaled: []float64{1, 0}},
		{Site: "x", Start: day(2), End: day(3), Scaled: []float64{1, 0.1}}, // same episode as day 1
		{Site: "y", Start: day(5), End: day(6), Scaled: []float64{0, 3}},
		{Site: "z", Start: day(3), End: day(4), Scaled: []float64{2, 0}},
		{Site: "w", Start: day(9), End: day(10), Scaled: []float64{1, 0}}, // after the query: not a precedent
		{Site: "v", Start: day(4), End: day(5)},                           // no vector
	}
	evs := []ingest.EventRow{
		{Site: "x", Start: day(6), Label: "failure"},
		{Site: "x", Start: day(20), Label: "late"},
		{Site: "z", Start: day(3), Label: "before"},
	}
	got := Precedents([]float64{1, 0}, day(8), past, evs, 7*24*time.Hour, 3)
	if len(got) != 3 {
		t.Fatalf("%d precedents, want 3: %+v", len(got), got)
	}
	for i, want := range []struct {
		site  string
		dist  float64
		after []string
	}{{"x", 0, []string{"failure"}}, {"z", 1, nil}, {"y", 0, nil}} {
		var after []string
		for _, e := range got[i].After {
			after = append(after, e.Label)
		}
		if want.site == "y" {
			want.dist = 3.1622776601683795 // √10
		}
		if got[i].Site != want.site || got[i].Distance != want.dist || !reflect.DeepEqual(after, want.after) {
			t.Errorf("precedent %d: %s at %.3f, after %v; want %s at %.3f, after %v", i, got[i].Site, got[i].Distance, after, want.site, want.dist, want.after)
		}
	}
}

func TestMerge(t *testing.T) {
	a := &model.Conditions{Labels: []string{"b", "d"}, Counts: [][]int{{1, 2, 3}, {0, 0, 1}}, Events: 2}
	b := &model.Conditions{Labels: []string{"a", "b"}, Counts: [][]int{{5, 1, 0}, {0, 0, 4}}, Events: 3, Span: "rule"}
	want := &model.Conditions{Labels: []string{"a", "b", "d"}, Counts: [][]int{{5, 2, 2, 3}, {0, 0, 0, 5}}, Events: 5, Span: "rule"}
	if got := Merge(a, b); !reflect.DeepEqual(got, want) {
		t.Errorf("got %+v, want %+v", got, want)
	}
}
