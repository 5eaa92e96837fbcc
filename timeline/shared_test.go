package timeline

import (
	"slices"
	"testing"
	"time"
)

func TestBuildSharedConditions(t *testing.T) {
	// Eight sites in regime 1 for 21 days; on days 9 to 11 a storm carries
	// six of them to regime 2's centroid. Site s7 changes to regime 3 on
	// day 15, alone.
	seqs := map[string][]int{}
	for i := range 8 {
		r := slices.Repeat([]int{1}, 21)
		if i < 6 {
			copy(r[9:12], []int{2, 2, 2})
		}
		if i == 7 {
			copy(r[15:], slices.Repeat([]int{3}, 6))
		}
		seqs[string(rune('0'+i))] = r
	}
	decoded := inputs(sitesOf(seqs))
	switches, err := Build(testModel(), decoded, Config{})
	if err != nil {
		t.Fatal(err)
	}
	want := Switch{Site: "7", Time: day0.AddDate(0, 0, 2+15), From: 1, To: 3, Before: 15, After: 6}
	if len(switches) != 1 {
		t.Fatalf("switches %v, want only %v", switches, want)
	}
	if got := switches[0]; got.Confidence <= 0 {
		t.Errorf("switch confidence %g, want above 0", got.Confidence)
	} else if got.Confidence = 0; got != want {
		t.Errorf("switch %+v, want %+v", got, want)
	}
	for _, s := range []string{"0", "5", "6"} {
		if got := regimesOf(decoded, s); slices.ContainsFunc(got, func(r int) bool { return r != 1 }) {
			t.Errorf("site %s: regimes %v, want 1 throughout", s, got)
		}
	}

	// A storm that reaches only a minority of the regime's sites leaves
	// them switching there and back.
	for i := range 8 {
		r := slices.Repeat([]int{1}, 21)
		if i < 3 {
			copy(r[9:12], []int{2, 2, 2})
		}
		seqs[string(rune('0'+i))] = r
	}
	decoded = inputs(sitesOf(seqs))
	switches, err = Build(testModel(), decoded, Config{})
	if err != nil {
		t.Fatal(err)
	}
	var at []time.Time
	for _, sw := range switches {
		at = append(at, sw.Time)
	}
	if len(switches) != 6 {
		t.Errorf("switches at %v, want 6: three sites to regime 2 and back", at)
	}
}
