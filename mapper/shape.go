package mapper

import (
	"encoding/json"

	"github.com/kinmap/kinmap/lattice"
)

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
		lattice.Shape
	}
	hex, flat, err := lattice.DecodeShaped(b, &v)
	if err != nil {
		return err
	}
	*c = Config(v.plain)
	c.Hex, c.Flat = hex, flat
	return nil
}
