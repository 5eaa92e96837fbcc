package ingest

import (
	"errors"
	"fmt"
	"reflect"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
)

func TestReadRegisterCSV(t *testing.T) {
	// Semicolons, a byte order mark, a quoted field holding the delimiter
	// and a line break (RFC 4180 §2.6), and every attribute type.
	text := "\xef\xbb\xbfsite;lat;lon;name;pumps;depth;manned;since\n" +
		"P2;-33.8688;151.2093;\"Harbour; east\nside\";3;12.5;true;2019\n" +
		"P1;48.1372;11.5756;Isar;2;;FALSE;2020\n" +
		"P3;;;\"\";4;7;true;\n"
	reg, err := ReadRegister(writeFile(t, "sites.csv", []byte(text)), RegisterOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if reg.Key != "site" || !reflect.DeepEqual(reg.AttrNames, []string{"name", "pumps", "depth", "manned", "since"}) {
		t.Fatalf("key %q, attributes %v", reg.Key, reg.AttrNames)
	}
	want := []*Site{
		{ID: "P1", Lat: 48.1372, Lon: 11.5756, Located: true, Attrs: []Attr{
			{"name", "Isar"}, {"pumps", int64(2)}, {"depth", nil}, {"manned", false}, {"since", int64(2020)}}},
		{ID: "P2", Lat: -33.8688, Lon: 151.2093, Located: true, Attrs: []Attr{
			{"name", "Harbour; east\nside"}, {"pumps", int64(3)}, {"depth", 12.5}, {"manned", true}, {"since", int64(2019)}}},
		{ID: "P3", Attrs: []Attr{
			{"name", nil}, {"pumps", int64(4)}, {"depth", 7.0}, {"manned", true}, {"since", nil}}},
	}
	if !reflect.DeepEqual(reg.Sites, want) {
		for i := range reg.Sites {
			t.Errorf("site %d: %+v", i, *reg.Sites[i])
		}
	}
	if s, ok := reg.Lookup("P2"); !ok || s.Lat != -33.8688 {
		t.Errorf("Lookup(P2) = %v, %v", s, ok)
	}
	if _, ok := reg.Lookup("P9"); ok {
		t.Error("Lookup(P9) found a site")
	}
}

func TestReadRegisterGeoJSON(t *testing.T) {
	// RFC 7946 §3.1.2: a Point's coordinates are longitude, latitude.
	text := `{"type": "FeatureCollection", "features": [
	 {"type": "Feature", "geometry": {"type": "Point", "coordinates": [11.5756, 48.1372]},
	  "properties": {"site": "M1", "zone": "south", "height": 10, "ok": true}},
	 {"type": "Feature", "id": 7, "geometry": {"type": "Point", "coordinates": [-0.1276, 51.5072]},
	  "properties": {"zone": "west", "height": 12.5, "tags": ["a"]}},
	 {"type": "Feature", "id": "M3", "geometry": null, "properties": null}
	]}`
	reg, err := ReadRegister(writeFile(t, "sites.geojson", []byte(text)), DefaultRegisterOptions())
	if err != nil {
		t.Fatal(err)
	}
	want := []*Site{
		{ID: "7", Lat: 51.5072, Lon: -0.1276, Located: true, Attrs: []Attr{{"zone", "west"}, {"height", 12.5}, {"ok", nil}, {"tags", `["a"]`}}},
		{ID: "M1", Lat: 48.1372, Lon: 11.5756, Located: true, Attrs: []Attr{{"zone", "south"}, {"height", 10.0}, {"ok", true}, {"tags", nil}}},
		{ID: "M3", Attrs: []Attr{{"zone", nil}, {"height", nil}, {"ok", nil}, {"tags", nil}}},
	}
	if !reflect.DeepEqual(reg.Sites, want) {
		for i := range reg.Sites {
			t.Errorf("site %d: %+v", i, *reg.Sites[i])
		}
	}
	line := `{"type": "FeatureCollection", "features": [{"type": "Feature", "properties": {"site": "L"},
	 "geometry": {"type": "LineString", "coordinates": [[0, 0], [1, 1]]}}]}`
	if _, err := ReadRegister(writeFile(t, "line.geojson", []byte(line)), RegisterOptions{}); err == nil ||
		!strings.Contains(err.Error(), "LineString geometry, want Point") {
		t.Errorf("line geometry: %v", err)
	}
	twice := `{"type": "FeatureCollection", "features": [
	 {"type": "Feature", "id": "D", "geometry": null, "properties": null},
	 {"type": "Feature", "id": "E", "geometry": null, "properties": null},
	 {"type": "Feature", "geometry": null, "properties": {"site": "D"}}]}`
	if _, err := ReadRegister(writeFile(t, "twice.geojson", []byte(twice)), RegisterOptions{}); err == nil ||
		!strings.Contains(err.Error(), `twice.geojson: GeoJSON feature 3: site id "D" appears more than once (first at feature 1)`) {
		t.Errorf("duplicate feature ids: %v", err)
	}
}

func TestReadRegisterParquetAndArrow(t *testing.T) {
	schema := arrow.NewSchema([]arrow.Field{
		{Name: "id", Type: arrow.PrimitiveTypes.Int64},
		{Name: "y", Type: arrow.PrimitiveTypes.Float64, Nullable: true},
		{Name: "x", Type: arrow.PrimitiveTypes.Float64, Nullable: true},
		{Name: "kind", Type: arrow.BinaryTypes.String, Nullable: true},
		{Name: "n", Type: arrow.PrimitiveTypes.Uint8},
		{Name: "active", Type: arrow.FixedWidthTypes.Boolean, Nullable: true},
		{Name: "built", Type: arrow.FixedWidthTypes.Date32},
	}, nil)
	rec := record(t, schema, [][]any{
		{20, 60.17, 24.94, "mast", 3, true, 0},
		{10, nil, nil, nil, 255, nil, 19723},
	})
	defer rec.Release()
	want := []*Site{
		{ID: "10", Attrs: []Attr{{"kind", nil}, {"n", int64(255)}, {"active", nil}, {"built", "2024-01-01T00:00:00Z"}}},
		{ID: "20", Lat: 60.17, Lon: 24.94, Located: true, Attrs: []Attr{{"kind", "mast"}, {"n", int64(3)}, {"active", true}, {"built", "1970-01-01T00:00:00Z"}}},
	}
	opt := RegisterOptions{Key: "id", LatCol: "y", LonCol: "x"}
	for _, path := range []string{
		writeArrowParquet(t, "sites.parquet", rec, 1, true),
		writeArrowIPC(t, "sites.arrow", false, rec),
		writeArrowIPC(t, "sites.arrows", true, rec),
	} {
		reg, err := ReadRegister(path, opt)
		if err != nil {
			t.Fatal(err)
		}
		if !reflect.DeepEqual(reg.Sites, want) {
			for i := range reg.Sites {
				t.Errorf("%s: site %d: %+v", path, i, *reg.Sites[i])
			}
		}
	}
}

func TestBadRegister(t *testing.T) {
	tests := []struct {
		name, text string
		opt        RegisterOptions
		usage      bool
		want       string
	}{
		{"duplicate ids", "site,lat,lon\nA,1,2\nB,3,4\nA,5,6\n", RegisterOptions{}, false,
			`sites.csv: line 4: column "site": site id "A" appears more than once (first at line 2)`},
		// Sydney and Munich with the columns exchanged: latitudes 151 and
		// 11, longitudes -33 and 48.
		{"swapped lat and lon", "site,lat,lon\nSYD,151.2093,-33.8688\nMUC,11.5756,48.1372\n", RegisterOptions{}, false,
			`site "SYD": latitude 151.2093 is outside [-90, 90] while the longitudes lie within [-90, 90]: the columns "lat" and "lon" look swapped`},
		{"latitude out of range", "site,lat,lon\nA,95,100\nB,10,-120\n", RegisterOptions{}, false,
			`site "A": latitude 95 (column "lat") is outside [-90, 90]`},
		// One bad latitude in a European fleet, whose longitudes all fit
		// as latitudes, once read as swapped columns.
		{"one latitude of 999", "site,lat,lon\nA,48.1,11.5\nB,999,12.0\nC,47.0,13.0\n", RegisterOptions{}, false,
			`line 3: site "B": latitude 999 (column "lat") is outside [-90, 90]`},
		{"NaN latitude", "site,lat,lon\nA,48.1,11.5\nB,NaN,12.0\n", RegisterOptions{}, false,
			`line 3: site "B": latitude NaN (column "lat") is not a number`},
		{"site id not UTF-8", "site,lat,lon\n" + distinctRows(500) + "caf\xe9,1,1\n", RegisterOptions{}, false,
			`line 502: column "site": site id "caf\xe9" is not UTF-8`},
		{"longitude out of range", "site,lat,lon\nA,10,181\n", RegisterOptions{}, false,
			`site "A": longitude 181 (column "lon") is outside [-180, 180]`},
		{"text latitude", "site,lat,lon\nA,north,1\n", RegisterOptions{}, false, `line 2: column "lat": "north" is not a number`},
		{"empty id", "site,lat,lon\n,1,1\n", RegisterOptions{}, false, `line 2: column "site": empty site id`},
		{"missing key", "id,lat,lon\nA,1,1\n", RegisterOptions{}, false, `column "site": no such column`},
		{"lon only", "site,lon\nA,1\n", RegisterOptions{}, false, `column "lon": position column without its partner "lat"`},
		{"same column twice", "site,lat,lon\nA,1,1\n", RegisterOptions{LatCol: "site"}, true, "must differ"},
	}
	for _, tt := range tests {
		_, err := ReadRegister(writeFile(t, "sites.csv", []byte(tt.text)), tt.opt)
		if err == nil || !strings.Contains(err.Error(), tt.want) || errors.Is(err, ErrUsage) != tt.usage {
			t.Errorf("%s: error %v, want one with %q (usage %v)", tt.name, err, tt.want, tt.usage)
		}
		if err != nil && strings.Contains(err.Error(), "swapped") != strings.Contains(tt.want, "swapped") {
			t.Errorf("%s: error %v says swapped columns: %v, want %v", tt.name, err, !strings.Contains(tt.want, "swapped"), strings.Contains(tt.want, "swapped"))
		}
	}
}

func TestBuildRegister(t *testing.T) {
	a := &Site{ID: "b", Lat: 1, Lon: 2, Located: true, Attrs: []Attr{{"zone", "n"}}}
	b := &Site{ID: "a", Attrs: []Attr{{"zone", nil}}}
	reg, err := buildRegister("site", []string{"zone"}, []*Site{a, b})
	if err != nil {
		t.Fatal(err)
	}
	if reg.Sites[0] != b || reg.Sites[1] != a {
		t.Errorf("not sorted by id: %v, %v", reg.Sites[0].ID, reg.Sites[1].ID)
	}
	if s, ok := reg.Lookup("b"); !ok || s != a {
		t.Error("Lookup(b) failed")
	}
	var nilReg *Register
	if _, ok := nilReg.Lookup("a"); ok {
		t.Error("nil register found a site")
	}
	for _, tt := range []struct {
		sites []*Site
		want  string
	}{
		{[]*Site{a, {ID: "b", Attrs: []Attr{{"zone", 1}}}}, `site id "b" appears more than once`},
		{[]*Site{{ID: "", Attrs: []Attr{{"zone", 1}}}}, "empty site id"},
		{[]*Site{{ID: "c"}}, `site "c" has 0 attributes, want 1`},
		{[]*Site{{ID: "c", Attrs: []Attr{{"area", 1}}}}, `attribute 1 is "area", want "zone"`},
		{[]*Site{{ID: "c", Lat: -91, Lon: 0, Located: true, Attrs: []Attr{{"zone", 1}}}}, "latitude -91"},
	} {
		if _, err := buildRegister("site", []string{"zone"}, tt.sites); err == nil || !strings.Contains(err.Error(), tt.want) {
			t.Errorf("error %v, want one with %q", err, tt.want)
		}
	}
}

// TestReadWithRegister attaches a register: registered sites get their
// entry, the others are kept and listed.
func TestReadWithRegister(t *testing.T) {
	reg, err := ReadRegister(writeFile(t, "sites.csv", []byte("site,lat,lon,zone\nA,48.1,11.5,south\nZ,1,1,none\n")), RegisterOptions{})
	if err != nil {
		t.Fatal(err)
	}
	dump := "site,time,channel,value\nA,1,flow,1\nB,1,flow,2\nC,2,flow,3\n"
	ds := mustRead(t, []string{writeFile(t, "dump.csv", []byte(dump))}, func(o *Options) { o.Register = reg })
	if ds.Sites[0].Info == nil || ds.Sites[0].Info.Attrs[0].Value != "south" || ds.Sites[1].Info != nil {
		t.Errorf("info: %+v, %+v", ds.Sites[0].Info, ds.Sites[1].Info)
	}
	if !reflect.DeepEqual(ds.Summary.Unregistered, []string{"B", "C"}) || len(ds.Sites) != 3 {
		t.Errorf("unregistered %v, %d sites", ds.Summary.Unregistered, len(ds.Sites))
	}
}

// distinctRows returns n register rows of distinct ids, enough to pass the
// head that the format is detected from.
func distinctRows(n int) string {
	var b strings.Builder
	for i := range n {
		fmt.Fprintf(&b, "S%04d,1,1\n", i)
	}
	return b.String()
}
