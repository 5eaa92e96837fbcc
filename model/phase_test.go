package model

import (
	"bytes"
	"maps"
	"math/rand/v2"
	"reflect"
	"slices"
	"strings"
	"testing"

	"github.com/kinmap/kinmap/features"
)

// decodedOn returns, for each unit of m, windows won by it and decoded
// into the regime into gives that unit's regime (its own when absent),
// n windows each.
func decodedOn(m *Model, n int, into map[int][]int) []features.Window {
	var ws []features.Window
	for u, id := range m.UnitRegime {
		rs, ok := into[id]
		if !ok {
			rs = slices.Repeat([]int{id}, n)
		}
		for _, r := range rs {
			ws = append(ws, features.Window{Unit: u, Regime: r})
		}
	}
	return ws
}

// An area no window was decoded into becomes a phase of the regime most of
// its windows were decoded into; the numbers close up after the held
// regimes, and the model reads back with its phase.
func TestFold(t *testing.T) {
	mdl, _, _ := fitted(t)
	if ids := slices.Collect(maps.Keys(regimeIDs(mdl))); len(ids) != 3 {
		t.Fatalf("fitted model has regimes %v, want 3", ids)
	}
	units2 := slices.Clone(mdl.Regimes[1].Units)
	m := *mdl
	m.UnitRegime = slices.Clone(mdl.UnitRegime)
	// Regime 2's windows: three each decoded into regime 3, one into 1.
	phases := m.Fold(decodedOn(&m, 2, map[int][]int{2: {3, 1, 3, 3}}))
	if len(phases) != 1 || phases[0].Before != 2 || phases[0].Of != 3 {
		t.Fatalf("phases %+v, want regime 2 as a phase of 3", phases)
	}
	if got := regimeList(&m); !slices.Equal(got, []int{1, 3}) {
		t.Errorf("regimes %v after folding, want [1 3]", got)
	}
	if m.Choice.K != 2 || mdl.Choice.K != 3 {
		t.Errorf("choice K %d (the original's %d), want 2 (3)", m.Choice.K, mdl.Choice.K)
	}
	for _, u := range units2 {
		if m.UnitRegime[u] != 3 || !slices.Contains(m.Regimes[1].Units, u) {
			t.Errorf("unit %d of the phase is in regime %d, want 3", u, m.UnitRegime[u])
		}
	}
	states, report := m.States()
	if len(states) != 3 || !slices.Equal(report, []int{0, 1, 1}) || !slices.Equal(states[2].Centroid, mdl.Regimes[1].Centroid) {
		t.Errorf("states report as %v, want [0 1 1] with the phase's centroid last", report)
	}
	ids := m.Compact()
	if want := map[int]int{1: 1, 3: 2, 2: 3}; !maps.Equal(ids, want) {
		t.Errorf("renumbering %v, want %v", ids, want)
	}
	if got := regimeList(&m); !slices.Equal(got, []int{1, 2}) || m.Phases[0].ID != 3 || m.Phases[0].Of != 2 {
		t.Errorf("after numbering: regimes %v, phase %d of %d; want [1 2], phase 3 of 2", got, m.Phases[0].ID, m.Phases[0].Of)
	}
	if n := m.PhaseNotes(); len(n) != 1 || !strings.Contains(n[0], "found as regime 2") || !strings.Contains(n[0], "a phase of regime 2") {
		t.Errorf("notes %q", n)
	}
	var buf bytes.Buffer
	if err := m.Write(&buf); err != nil {
		t.Fatal(err)
	}
	back, err := Read(bytes.NewReader(buf.Bytes()))
	if err != nil || !reflect.DeepEqual(back.Phases, m.Phases) || !slices.Equal(back.UnitRegime, m.UnitRegime) {
		t.Fatalf("read back %v: phases %+v, want %+v", err, back, m.Phases)
	}
	// A phase whose units another regime has is refused.
	bad := m
	bad.Phases = slices.Clone(m.Phases)
	bad.Phases[0].Of = 1
	buf.Reset()
	if err := bad.Write(&buf); err != nil {
		t.Fatal(err)
	}
	if _, err := Read(&buf); err == nil || !strings.Contains(err.Error(), "not one of regime 1's units") {
		t.Errorf("a phase on another regime's units read: %v", err)
	}
}

// A regime that holds a window is never folded, whichever regimes the
// windows were decoded into; the phases go to held regimes only.
func TestFoldKeepsHeld(t *testing.T) {
	mdl, _, _ := fitted(t)
	rng := rand.New(rand.NewPCG(5, 6))
	for trial := range 50 {
		m := *mdl
		m.UnitRegime = slices.Clone(mdl.UnitRegime)
		var ws []features.Window
		held := map[int]bool{}
		n := 1 + rng.IntN(40)
		for range n {
			r := mdl.Regimes[rng.IntN(len(mdl.Regimes))].ID
			if trial%2 == 0 {
				r = mdl.Regimes[0].ID // one regime holds everything
			}
			ws = append(ws, features.Window{Unit: rng.IntN(len(m.UnitRegime)), Regime: r})
			held[r] = true
		}
		phases := m.Fold(ws)
		if got := regimeIDs(&m); !maps.Equal(got, held) {
			t.Fatalf("trial %d: regimes %v after folding, held %v", trial, got, held)
		}
		for _, p := range phases {
			if !held[p.Of] || held[p.Before] {
				t.Errorf("trial %d: phase %+v of an unheld regime, or a held one folded", trial, p)
			}
		}
		if err := m.check(); err != nil {
			t.Errorf("trial %d: folded model inconsistent: %v", trial, err)
		}
	}
}

// An area whose units won no window goes to the regime of the nearest
// centroid.
func TestFoldNearest(t *testing.T) {
	mdl, _, _ := fitted(t)
	m := *mdl
	m.UnitRegime = slices.Clone(mdl.UnitRegime)
	want, best := 0, -1.0
	for _, r := range mdl.Regimes[1:] {
		var d float64
		for j, v := range r.Centroid {
			d += (v - mdl.Regimes[0].Centroid[j]) * (v - mdl.Regimes[0].Centroid[j])
		}
		if best < 0 || d < best {
			want, best = r.ID, d
		}
	}
	phases := m.Fold(decodedOn(&m, 1, map[int][]int{1: nil}))
	if len(phases) != 1 || phases[0].Before != 1 || phases[0].Of != want {
		t.Errorf("phases %+v, want regime 1 a phase of %d", phases, want)
	}
}

func regimeIDs(m *Model) map[int]bool {
	ids := map[int]bool{}
	for _, r := range m.Regimes {
		ids[r.ID] = true
	}
	return ids
}

func regimeList(m *Model) []int {
	var ids []int
	for _, r := range m.Regimes {
		ids = append(ids, r.ID)
	}
	return ids
}
