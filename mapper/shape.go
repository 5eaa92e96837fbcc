package mapper

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
)

// The names of a lattice's shape, as flags, files and reports give them: its
// cells are hexagonal or square, and its surface a torus that wraps both
// ways or a plane with edges.
const (
	CellsHex     = "hex"
	CellsSquare  = "square"
	SurfaceTorus = "torus"
	SurfacePlane = "plane"
)

// Cells names the shape of the lattice's cells: CellsHex or CellsSquare.
func (l Lattice) Cells() string {
	if l.Hex {
		return CellsHex
	}
	return CellsSquare
}

// Surface names the lattice's surface: SurfaceTorus or SurfacePlane.
func (l Lattice) Surface() string {
	if l.Flat {
		return SurfacePlane
	}
	return SurfaceTorus
}

// parseShape returns the Hex and Flat settings that the names cells
// (CellsHex or CellsSquare) and surface (SurfaceTorus or SurfacePlane) stand for.
func parseShape(cells, surface string) (hex, flat bool, err error) {
	switch cells {
	case CellsHex, CellsSquare:
	default:
		return false, false, fmt.Errorf("cells %q: want %s or %s", cells, CellsHex, CellsSquare)
	}
	switch surface {
	case SurfaceTorus, SurfacePlane:
	default:
		return false, false, fmt.Errorf("surface %q: want %s or %s", surface, SurfaceTorus, SurfacePlane)
	}
	return cells == CellsHex, surface == SurfacePlane, nil
}

// recordedShape is a lattice's shape as a file records it: by name, or, in
// model files before format version 4 and in their run.json, as the
// booleans hex and flat.
type recordedShape struct {
	Cells   string `json:"cells,omitempty"`
	Surface string `json:"surface,omitempty"`
	Hex     *bool  `json:"hex,omitempty"`
	Flat    *bool  `json:"flat,omitempty"`
}

// settings returns the Hex and Flat settings the record stands for. It
// takes one way of recording only, and both of its parts.
func (r recordedShape) settings() (hex, flat bool, err error) {
	switch {
	case (r.Cells != "" || r.Surface != "") && (r.Hex != nil || r.Flat != nil):
		return false, false, errors.New("shape recorded both by name (cells, surface) and as hex and flat")
	case r.Hex != nil && r.Flat != nil:
		return *r.Hex, *r.Flat, nil
	case r.Hex != nil || r.Flat != nil:
		return false, false, errors.New("shape recorded as hex and flat: one of them is missing")
	}
	return parseShape(r.Cells, r.Surface)
}

// decodeShaped decodes b into v, a struct embedding recordedShape, refusing
// fields v does not have as ReadModel does for the rest of a model file,
// and returns the Hex and Flat settings of the shape recorded.
func decodeShaped(b []byte, v interface{ settings() (bool, bool, error) }) (hex, flat bool, err error) {
	dec := json.NewDecoder(bytes.NewReader(b))
	dec.DisallowUnknownFields()
	if err := dec.Decode(v); err != nil {
		return false, false, err
	}
	return v.settings()
}

// MarshalJSON records the lattice with its shape by name: Cols, Rows,
// Cells and Surface.
func (l Lattice) MarshalJSON() ([]byte, error) {
	return json.Marshal(struct {
		Cols, Rows     int
		Cells, Surface string
	}{l.Cols, l.Rows, l.Cells(), l.Surface()})
}

// UnmarshalJSON reads a lattice recorded by MarshalJSON or, as model files
// before format version 4 have it, with the booleans Hex and Flat.
func (l *Lattice) UnmarshalJSON(b []byte) error {
	var v struct {
		Cols, Rows int
		recordedShape
	}
	hex, flat, err := decodeShaped(b, &v)
	if err != nil {
		return err
	}
	*l = Lattice{Cols: v.Cols, Rows: v.Rows, Hex: hex, Flat: flat}
	return nil
}

// MarshalJSON records the settings with the lattice's shape by name:
// "cells" and "surface" in place of the fields Hex and Flat.
func (c Config) MarshalJSON() ([]byte, error) {
	type plain Config // without these methods
	l := c.Lattice()
	return json.Marshal(struct {
		plain
		Cells   string `json:"cells"`
		Surface string `json:"surface"`
	}{plain(c), l.Cells(), l.Surface()})
}

// UnmarshalJSON reads settings recorded by MarshalJSON or, as model files
// before format version 4 have them, with the booleans "hex" and "flat".
func (c *Config) UnmarshalJSON(b []byte) error {
	type plain Config
	var v struct {
		plain
		recordedShape
	}
	hex, flat, err := decodeShaped(b, &v)
	if err != nil {
		return err
	}
	*c = Config(v.plain)
	c.Hex, c.Flat = hex, flat
	return nil
}
