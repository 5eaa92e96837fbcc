package model

import (
	"bytes"
	"encoding/json"
	"reflect"
	"strings"
	"testing"

	"github.com/kinmap/kinmap/features"
)

// A model's levels read back as written, follow a renumbering, and levels
// of a regime the model does not have are refused; the file says format
// version 6, which a build that reads up to 5 refuses as newer instead of
// failing on a field it does not know.
func TestModelLevels(t *testing.T) {
	mdl, _, _ := fitted(t)
	m := *mdl
	id := m.Regimes[0].ID
	m.Levels = &Levels{
		Regimes: map[int][]features.Level{id: {{Channel: "flow", Readings: 40, Median: 12.5, P95: 20}}},
		Fleet:   []features.Level{{Channel: "flow", Readings: 400, Median: 48, P95: 61.25}},
	}
	var buf bytes.Buffer
	if err := m.Write(&buf); err != nil {
		t.Fatal(err)
	}
	if !bytes.HasPrefix(buf.Bytes(), []byte(magic+" 6\n")) {
		t.Errorf("header %q, want format version 6", bytes.SplitN(buf.Bytes(), []byte("\n"), 2)[0])
	}
	back, err := Read(bytes.NewReader(buf.Bytes()))
	if err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(back.Levels, m.Levels) {
		t.Errorf("levels read back %+v, wrote %+v", back.Levels, m.Levels)
	}

	ids := make([]int, len(back.Regimes))
	for i := range ids {
		ids[i] = 100 + i
	}
	if err := back.Renumber(ids); err != nil {
		t.Fatal(err)
	}
	if got := back.Levels.Regimes[100]; len(got) != 1 || got[0].Median != 12.5 || len(back.Levels.Regimes) != 1 {
		t.Errorf("levels after renumbering %+v, want regime %d's under 100", back.Levels.Regimes, id)
	}

	m.Levels = &Levels{Regimes: map[int][]features.Level{999: nil}}
	buf.Reset()
	if err := m.Write(&buf); err != nil {
		t.Fatal(err)
	}
	if _, err := Read(&buf); err == nil || !strings.Contains(err.Error(), "levels of regime 999") {
		t.Errorf("levels of an unknown regime: got %v", err)
	}
}

// A version 5 file, as builds before levels wrote it, label knowledge
// included, still reads, without levels.
func TestModelReadsVersion5(t *testing.T) {
	mdl, _, _ := fitted(t)
	old := *mdl
	old.Version = 5
	old.Conditions = &Conditions{Labels: []string{"repair"}, Counts: make([][]int, mdl.Map.Units()), Span: "a week before", Events: 1}
	for u := range old.Conditions.Counts {
		old.Conditions.Counts[u] = []int{u % 3, 1}
	}
	payload, err := json.Marshal(&old)
	if err != nil {
		t.Fatal(err)
	}
	if bytes.Contains(payload, []byte(`"Levels"`)) || bytes.Contains(payload, []byte(`"Phases"`)) {
		t.Fatal("a version 5 payload has no Levels or Phases field")
	}
	file := fileAs(5, payload)
	back, err := Read(bytes.NewReader(file))
	if err != nil {
		t.Fatal(err)
	}
	if back.Version != 5 || back.Levels != nil || !reflect.DeepEqual(back.Conditions, old.Conditions) {
		t.Errorf("version 5 file read as version %d, levels %v, conditions %+v", back.Version, back.Levels, back.Conditions)
	}
	if states, _ := back.States(); back.Phases != nil || len(states) != len(mdl.Regimes) {
		t.Errorf("version 5 file read with phases %v and %d states for %d regimes", back.Phases, len(states), len(mdl.Regimes))
	}
}
