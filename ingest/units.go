package ingest

import (
	"bytes"
	"encoding/base64"
	"unicode"
	"unicode/utf8"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/ipc"
	"github.com/parquet-go/parquet-go/format"
)

// unitKey is the key of the field metadata of a Parquet or Arrow column
// that gives the unit of its readings, such as "m3/h". A wide dump's
// channels take it (Summary.Units).
const unitKey = "unit"

// maxUnitLen bounds a unit read from a file: a unit is a few characters,
// and a longer entry is something else.
const maxUnitLen = 32

// fieldUnit returns the unit in Arrow field metadata, "" when there is none
// or it does not look like a unit (too long, not text).
func fieldUnit(md arrow.Metadata) string {
	i := md.FindKey(unitKey)
	if i < 0 {
		return ""
	}
	u := md.Values()[i]
	if len(u) > maxUnitLen || !utf8.ValidString(u) {
		return ""
	}
	for _, r := range u {
		if unicode.IsControl(r) {
			return ""
		}
	}
	return u
}

// parquetUnits returns the units of the columns of a Parquet file by name:
// Parquet has no field metadata of its own, so Arrow's writers keep the
// Arrow schema, field metadata included, base64-encoded in the key-value
// metadata "ARROW:schema". It returns nil without one, and when it cannot
// be read, since units only label the descriptions; the schema passes the
// same checks as an Arrow stream's before it is decoded.
func parquetUnits(kv []format.KeyValue) (units map[string]string) {
	defer func() {
		if recover() != nil {
			units = nil
		}
	}()
	for _, e := range kv {
		if e.Key != "ARROW:schema" {
			continue
		}
		b, err := base64.StdEncoding.DecodeString(e.Value)
		if err != nil {
			if b, err = base64.RawStdEncoding.DecodeString(e.Value); err != nil {
				return nil
			}
		}
		r, err := ipc.NewReader(newCheckedStream(bytes.NewReader(b), int64(len(b))))
		if err != nil {
			return nil
		}
		defer r.Release()
		for _, f := range r.Schema().Fields() {
			if u := fieldUnit(f.Metadata); u != "" {
				if units == nil {
					units = map[string]string{}
				}
				units[f.Name] = u
			}
		}
	}
	return units
}

// noteUnits records the units of a wide dump's channel columns; the first
// file that gives a channel a unit sets it.
func (r *reader) noteUnits(fields []field, channels []int) {
	for _, i := range channels {
		f := &fields[i]
		if f.chanUnit == "" {
			continue
		}
		if r.sum.Units == nil {
			r.sum.Units = map[string]string{}
		}
		if _, ok := r.sum.Units[f.name]; !ok {
			r.sum.Units[f.name] = f.chanUnit
		}
	}
}
