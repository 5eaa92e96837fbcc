package ingest

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"slices"
	"strconv"
	"strings"
	"time"

	"github.com/paulmach/orb"
	"github.com/paulmach/orb/geojson"
)

// ReadRegister reads a site register: a CSV, Parquet or Arrow IPC table, or
// a GeoJSON FeatureCollection of points, detected from the content.
//
// In a table, opt.Key names the site id column, opt.LatCol and opt.LonCol
// the position in degrees (WGS 84); a register may have no position
// columns, and a row with a null position is not located. Every other
// column is an attribute. Attribute types: Parquet and Arrow integers
// become int64 (unsigned ones above the int64 range float64), floats
// float64, strings string, booleans bool, timestamps and dates RFC 3339
// strings; a CSV column is int64 when all its cells are integers, float64
// when they are numbers, bool when they are true or false, string
// otherwise; blank cells and nulls are nil.
//
// In GeoJSON (RFC 7946) the Point geometry gives the position and the
// properties the attributes, in the order they first appear; the id is the
// opt.Key property, or the feature's id when it lacks one. JSON numbers
// become int64 or float64 as for CSV, objects and arrays their JSON text.
//
// A latitude outside [-90, 90], a longitude outside [-180, 180] and a
// repeated or empty id are errors; latitudes beyond ±90 with longitudes
// that would fit as latitudes are refused as swapped columns.
func ReadRegister(path string, opt RegisterOptions) (*Register, error) {
	def := DefaultRegisterOptions()
	opt.Key = cmpOr(opt.Key, def.Key)
	opt.LatCol = cmpOr(opt.LatCol, def.LatCol)
	opt.LonCol = cmpOr(opt.LonCol, def.LonCol)
	if opt.Key == opt.LatCol || opt.Key == opt.LonCol || opt.LatCol == opt.LonCol {
		return nil, usagef("the register's key, lat and lon columns must differ (%q, %q, %q)", opt.Key, opt.LatCol, opt.LonCol)
	}
	if err := checkFile(path); err != nil {
		return nil, err
	}
	reg, err := readRegister(path, opt)
	if err != nil {
		return nil, inFile(err, path)
	}
	return reg, nil
}

func cmpOr(s, def string) string {
	if s == "" {
		return def
	}
	return s
}

func readRegister(path string, opt RegisterOptions) (*Register, error) {
	in, err := openInput(path)
	if err != nil {
		return nil, err
	}
	defer in.close()
	var t *regTable
	if in.format == formatGeoJSON {
		t, err = geoJSONTable(in.r, opt)
	} else {
		t, err = columnarTable(in, opt)
	}
	if err != nil {
		return nil, err
	}
	sites := make([]*Site, len(t.ids))
	for i, id := range t.ids {
		s := &Site{ID: id, Attrs: make([]Attr, len(t.attrs))}
		if t.located[i] {
			s.Lat, s.Lon, s.Located = t.lat[i], t.lon[i], true
		}
		for j, a := range t.attrs {
			s.Attrs[j] = Attr{Name: a.name, Value: a.vals[i]}
		}
		sites[i] = s
	}
	names := make([]string, len(t.attrs))
	for j, a := range t.attrs {
		names[j] = a.name
	}
	if err := checkSites(sites, opt.LatCol, opt.LonCol, func(id string) string { return t.at[id] }); err != nil {
		return nil, err
	}
	return buildRegister(opt.Key, names, sites)
}

// regTable is a register as read, a row per site.
type regTable struct {
	ids      []string
	lat, lon []float64
	located  []bool
	attrs    []*attrColumn
	at       map[string]string // where each id was read: "line 2", "row 2", "feature 2"
}

// addID adds the id of the next row, read at where, and returns where the
// id was read before, if it was.
func (t *regTable) addID(id, where string) (before string, dup bool) {
	if before, dup = t.at[id]; dup {
		return before, true
	}
	if t.at == nil {
		t.at = make(map[string]string)
	}
	t.at[id] = where
	t.ids = append(t.ids, id)
	return "", false
}

type attrColumn struct {
	name string
	text bool  // CSV cells, typed once the whole column is known
	vals []any // by row
}

func columnarTable(in *input, opt RegisterOptions) (*regTable, error) {
	src, err := in.source()
	if err != nil {
		return nil, err
	}
	defer src.close()
	fields := src.schema()
	key, lat, lon := -1, -1, -1
	t := &regTable{}
	attrOf := make([]*attrColumn, len(fields))
	for i, f := range fields {
		switch f.name {
		case opt.Key:
			key = i
		case opt.LatCol:
			lat = i
		case opt.LonCol:
			lon = i
		default:
			attrOf[i] = &attrColumn{name: f.name, text: f.kind == kindText}
			t.attrs = append(t.attrs, attrOf[i])
		}
	}
	switch {
	case key < 0:
		return nil, missingColumn(opt.Key, fields)
	case lat < 0 && lon >= 0:
		return nil, colErr(opt.LonCol, "position column without its partner %q", opt.LatCol)
	case lon < 0 && lat >= 0:
		return nil, colErr(opt.LatCol, "position column without its partner %q", opt.LonCol)
	}
	want := make([]bool, len(fields))
	for i := range want {
		want[i] = true
	}
	for {
		b, err := src.next(want)
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, err
		}
		if err := t.addBatch(b, key, lat, lon, attrOf); err != nil {
			return nil, err
		}
	}
	for _, a := range t.attrs {
		if a.text {
			inferText(a.vals)
		}
	}
	return t, nil
}

func (t *regTable) addBatch(b *batch, key, lat, lon int, attrOf []*attrColumn) error {
	codes, dict, err := b.keys(b.cols[key])
	if err != nil {
		return err
	}
	if err := b.checkUTF8(codes, dict, b.cols[key].name, "site id"); err != nil {
		return err
	}
	for i, c := range codes {
		if c < 0 {
			return b.errAt(i, b.cols[key].name, "empty site id")
		}
		id := strings.Clone(dict[c])
		if before, dup := t.addID(id, b.place(i)); dup {
			return b.errAt(i, b.cols[key].name, "site id %q appears more than once (first at %s)", id, before)
		}
	}
	if lat >= 0 {
		la, laOK, err := b.floats(b.cols[lat])
		if err != nil {
			return err
		}
		lo, loOK, err := b.floats(b.cols[lon])
		if err != nil {
			return err
		}
		for i := range la {
			t.lat, t.lon = append(t.lat, la[i]), append(t.lon, lo[i])
			t.located = append(t.located, (laOK == nil || laOK[i]) && (loOK == nil || loOK[i]))
		}
	} else {
		t.lat, t.lon = append(t.lat, make([]float64, b.n)...), append(t.lon, make([]float64, b.n)...)
		t.located = append(t.located, make([]bool, b.n)...)
	}
	for i, a := range attrOf {
		if a == nil {
			continue
		}
		vals, err := b.attrValues(b.cols[i])
		if err != nil {
			return err
		}
		a.vals = append(a.vals, vals...)
	}
	return nil
}

// attrValues converts a column of a register to attribute values; CSV
// cells stay strings until the whole column is known.
func (b *batch) attrValues(c *column) ([]any, error) {
	out := make([]any, b.n)
	switch c.kind {
	case kindText:
		for i, s := range c.text {
			out[i] = strings.Clone(s)
		}
	case kindInt:
		for i, v := range c.ints {
			switch {
			case c.null(i):
			case c.unsigned && v < 0:
				out[i] = float64(uint64(v))
			default:
				out[i] = v
			}
		}
	case kindFloat:
		for i, v := range c.floats {
			if !c.null(i) {
				out[i] = v
			}
		}
	case kindString:
		for i, code := range c.codes {
			if code >= 0 {
				out[i] = strings.Clone(c.dict[code])
			}
		}
	case kindBool:
		for i, v := range c.bools {
			if !c.null(i) {
				out[i] = v
			}
		}
	case kindTime:
		ns, state, _, err := b.times(c, 1)
		if err != nil {
			return nil, err
		}
		for i, t := range ns {
			if state == nil || state[i] == timeOK {
				out[i] = time.Unix(0, t).UTC().Format(time.RFC3339Nano)
			}
		}
	default:
		return nil, colErr(c.name, "%s", c.why)
	}
	return out, nil
}

// inferText types the CSV cells of a column in place: int64 when all are
// integers, float64 when all are numbers, bool when all are true or false,
// string otherwise; blank cells become nil.
func inferText(vals []any) {
	isInt, isNum, isBool := true, true, true
	for _, v := range vals {
		s := strings.TrimSpace(v.(string))
		if s == "" {
			continue
		}
		if _, err := strconv.ParseInt(s, 10, 64); err != nil {
			isInt = false
		}
		if _, err := strconv.ParseFloat(s, 64); err != nil && !isRangeErr(err) {
			isNum = false
		}
		if !strings.EqualFold(s, "true") && !strings.EqualFold(s, "false") {
			isBool = false
		}
	}
	for i, v := range vals {
		s := v.(string)
		t := strings.TrimSpace(s)
		switch {
		case t == "":
			vals[i] = nil
		case isInt:
			vals[i], _ = strconv.ParseInt(t, 10, 64)
		case isNum:
			vals[i], _ = strconv.ParseFloat(t, 64)
		case isBool:
			vals[i] = strings.EqualFold(t, "true")
		}
	}
}

func geoJSONTable(r io.Reader, opt RegisterOptions) (*regTable, error) {
	data, err := io.ReadAll(r)
	if err != nil {
		return nil, err
	}
	var fc geojson.FeatureCollectionOf[json.RawMessage]
	if err := json.Unmarshal(data, &fc); err != nil {
		return nil, fmt.Errorf("GeoJSON: %w", err)
	}
	t := &regTable{}
	byName := make(map[string]*attrColumn)
	for i, f := range fc.Features {
		props, err := orderedProperties(f.Properties)
		if err != nil {
			return nil, fmt.Errorf("GeoJSON feature %d: properties: %w", i+1, err)
		}
		id := f.ID
		for _, p := range props {
			if p.name == opt.Key {
				id = p.value
				continue
			}
			a := byName[p.name]
			if a == nil {
				a = &attrColumn{name: p.name, vals: make([]any, i, len(fc.Features))}
				byName[p.name] = a
				t.attrs = append(t.attrs, a)
			}
			a.vals = append(a.vals, p.value)
		}
		for _, a := range t.attrs {
			if len(a.vals) == i { // the feature lacks the property
				a.vals = append(a.vals, nil)
			}
		}
		idText, ok := jsonID(id)
		if !ok {
			return nil, fmt.Errorf("GeoJSON feature %d: no site id (property %q or feature id)", i+1, opt.Key)
		}
		if before, dup := t.addID(idText, fmt.Sprintf("feature %d", i+1)); dup {
			return nil, fmt.Errorf("GeoJSON feature %d: site id %q appears more than once (first at %s)", i+1, idText, before)
		}
		var pt orb.Point
		switch g := f.Geometry.(type) {
		case nil:
		case orb.Point:
			pt = g
		default:
			return nil, fmt.Errorf("GeoJSON feature %d (site %q): %s geometry, want Point", i+1, idText, g.GeoJSONType())
		}
		// RFC 7946 §3.1.1: a position is longitude, then latitude.
		t.lon, t.lat = append(t.lon, pt[0]), append(t.lat, pt[1])
		t.located = append(t.located, f.Geometry != nil)
	}
	for _, a := range t.attrs {
		inferJSON(a.vals)
	}
	return t, nil
}

type property struct {
	name  string
	value any // nil, bool, string, json.Number, or JSON text of objects and arrays
}

// orderedProperties decodes a properties object keeping the order of its
// members and numbers exact.
func orderedProperties(raw json.RawMessage) ([]property, error) {
	if len(raw) == 0 || bytes.Equal(bytes.TrimSpace(raw), []byte("null")) {
		return nil, nil
	}
	dec := json.NewDecoder(bytes.NewReader(raw))
	dec.UseNumber()
	if tok, err := dec.Token(); err != nil || tok != json.Delim('{') {
		return nil, errors.New("not an object")
	}
	var props []property
	for dec.More() {
		tok, err := dec.Token()
		if err != nil {
			return nil, err
		}
		var v json.RawMessage
		if err := dec.Decode(&v); err != nil {
			return nil, err
		}
		p := property{name: tok.(string)}
		switch v[0] {
		case '{', '[':
			p.value = string(v)
		default:
			vd := json.NewDecoder(bytes.NewReader(v))
			vd.UseNumber()
			if err := vd.Decode(&p.value); err != nil {
				return nil, err
			}
		}
		props = append(props, p)
	}
	return props, nil
}

// jsonID gives the text of a site id held in JSON: a string or a number.
func jsonID(v any) (string, bool) {
	switch v := v.(type) {
	case string:
		return v, v != ""
	case json.Number:
		return v.String(), true
	case float64: // a feature id, as decoded by the GeoJSON reader
		return strconv.FormatFloat(v, 'f', -1, 64), true
	}
	return "", false
}

// inferJSON types the JSON values of a property like inferText does CSV
// cells; a property of mixed types becomes text.
func inferJSON(vals []any) {
	isInt, isNum, isBool := true, true, true
	for _, v := range vals {
		switch v := v.(type) {
		case json.Number:
			if _, err := v.Int64(); err != nil {
				isInt = false
			}
			isBool = false
		case bool:
			isInt, isNum = false, false
		case string:
			isInt, isNum, isBool = false, false, false
		}
	}
	for i, v := range vals {
		switch v := v.(type) {
		case json.Number:
			switch {
			case isInt:
				vals[i], _ = v.Int64()
			case isNum:
				vals[i], _ = v.Float64()
			default:
				vals[i] = v.String()
			}
		case bool:
			if !isBool {
				vals[i] = strconv.FormatBool(v)
			}
		}
	}
}

// checkSites checks the positions of located sites, and says the columns
// look swapped only when exchanging them would put every site in range.
// where, when not nil, says where a site was read ("line 12").
func checkSites(sites []*Site, latName, lonName string, where func(id string) string) error {
	swapped := true
	var bad *Site
	for _, s := range sites {
		if !s.Located {
			continue
		}
		swapped = swapped && swappable(s.Lat, s.Lon)
		if bad == nil && checkPosition(s.Lat, s.Lon, latName, lonName, false) != nil {
			bad = s
		}
	}
	if bad == nil {
		return nil
	}
	at := ""
	if where != nil && where(bad.ID) != "" {
		at = where(bad.ID) + ": "
	}
	return fmt.Errorf("%ssite %q: %w", at, bad.ID, checkPosition(bad.Lat, bad.Lon, latName, lonName, swapped))
}

// swappable reports whether lat and lon would both be in range exchanged.
func swappable(lat, lon float64) bool {
	return lon >= -90 && lon <= 90 && lat >= -180 && lat <= 180
}

// buildRegister builds a register of sites: it sorts them by ID, checks
// that ids are unique and not empty, that each site has the attributes
// attrNames in that order and that positions are in range. The register
// keeps the sites, not copies.
func buildRegister(key string, attrNames []string, sites []*Site) (*Register, error) {
	r := &Register{Key: key, AttrNames: slices.Clone(attrNames), Sites: slices.Clone(sites),
		index: make(map[string]*Site, len(sites))}
	slices.SortStableFunc(r.Sites, func(a, b *Site) int { return strings.Compare(a.ID, b.ID) })
	for i, s := range r.Sites {
		if s.ID == "" {
			return nil, errors.New("empty site id")
		}
		if i > 0 && r.Sites[i-1].ID == s.ID {
			return nil, fmt.Errorf("site id %q appears more than once", s.ID)
		}
		if len(s.Attrs) != len(attrNames) {
			return nil, fmt.Errorf("site %q has %d attributes, want %d", s.ID, len(s.Attrs), len(attrNames))
		}
		for j, a := range s.Attrs {
			if a.Name != attrNames[j] {
				return nil, fmt.Errorf("site %q: attribute %d is %q, want %q", s.ID, j+1, a.Name, attrNames[j])
			}
		}
		r.index[s.ID] = s
	}
	if err := checkSites(r.Sites, "lat", "lon", nil); err != nil {
		return nil, err
	}
	return r, nil
}
