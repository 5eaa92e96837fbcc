package model

import (
	"bytes"
	"encoding/json"
	"testing"
)

// A labelled model with channel units reads back with its labels and units.
func TestModelKeepsLabels(t *testing.T) {
	mdl, _, _ := fitted(t)
	mdl.Regimes[0].Name, mdl.Regimes[0].Status = "baseline, \"A\"", StatusNormal
	mdl.Units = map[string]string{"flow": "m³/h"}
	var buf bytes.Buffer
	if err := mdl.Write(&buf); err != nil {
		t.Fatal(err)
	}
	back, err := Read(&buf)
	if err != nil {
		t.Fatal(err)
	}
	if g := back.Regimes[0]; g.Name != mdl.Regimes[0].Name || g.Status != StatusNormal {
		t.Errorf("read back %q %q", g.Name, g.Status)
	}
	if back.Units["flow"] != "m³/h" || len(back.Units) != 1 {
		t.Errorf("read back units %v", back.Units)
	}
}

// TestModelReadsVersion4 reads a file as version 4 wrote it, before models
// recorded the channels' units: the header and payload say 4 and the
// payload has no Units field.
func TestModelReadsVersion4(t *testing.T) {
	mdl, _, _ := fitted(t)
	old := *mdl
	old.Version, old.Units = 4, nil
	payload, err := json.Marshal(&old)
	if err != nil {
		t.Fatal(err)
	}
	var doc map[string]any
	if err := json.Unmarshal(payload, &doc); err != nil {
		t.Fatal(err)
	}
	if _, ok := doc["Units"]; ok {
		t.Fatal("a version 4 payload has no Units field")
	}
	file := fileAs(4, payload)
	back, err := Read(bytes.NewReader(file))
	if err != nil {
		t.Fatal(err)
	}
	if back.Version != 4 || back.Units != nil || back.Map.Lattice != mdl.Map.Lattice {
		t.Errorf("version 4 file read as version %d, units %v", back.Version, back.Units)
	}
}
