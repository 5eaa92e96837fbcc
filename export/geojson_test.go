package export

import (
	"encoding/json"
	"fmt"
	"os/exec"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
	"time"
)

// checkRFC7946 fails the test for every rule of RFC 7946 that doc breaks
// (see rfc7946) and returns its features.
func checkRFC7946(t *testing.T, name string, doc []byte) []map[string]any {
	t.Helper()
	features, broken := rfc7946(doc)
	for _, b := range broken {
		t.Errorf("%s: %s", name, b)
	}
	if len(broken) > 0 {
		t.FailNow()
	}
	return features
}

// rfc7946 checks a document against the structure rules of RFC 7946
// (section numbers from memory): a FeatureCollection with a "features"
// array (3.3) of Features with "geometry" and "properties" members (3.2),
// no "crs" member anywhere (4; the member of the 2008 specification is
// gone, Appendix B.1), positions of two numbers, longitude first, in
// WGS 84 ranges (3.1.1 and 4; a third number, the altitude, is allowed by
// the RFC but kinmap writes none), LineStrings of two or more positions
// (3.1.4), and polygon rings closed, of four or more positions, the
// exterior counterclockwise and holes clockwise (3.1.6, the right-hand
// rule). It returns the features and the rules broken, each naming its
// section.
func rfc7946(doc []byte) ([]map[string]any, []string) {
	var c geoCheck
	var root map[string]any
	if err := json.Unmarshal(doc, &root); err != nil {
		return nil, []string{fmt.Sprintf("not a JSON object: %v", err)}
	}
	if root["type"] != "FeatureCollection" {
		return nil, []string{fmt.Sprintf("type %v, want FeatureCollection (RFC 7946, 3.3)", root["type"])}
	}
	c.noCRS(root)
	list, ok := root["features"].([]any)
	if !ok {
		c.fail("features is %T, want an array (RFC 7946, 3.3)", root["features"])
	}
	var out []map[string]any
	for i, f := range list {
		feat, ok := f.(map[string]any)
		if !ok || feat["type"] != "Feature" {
			c.fail("feature %d is not a Feature object (RFC 7946, 3.2)", i)
			continue
		}
		g, hasG := feat["geometry"]
		p, hasP := feat["properties"]
		if !hasG || !hasP {
			c.fail("feature %d lacks geometry or properties (RFC 7946, 3.2)", i)
		}
		if _, ok := p.(map[string]any); p != nil && !ok {
			c.fail("feature %d: properties is %T, want an object or null (RFC 7946, 3.2)", i, p)
		}
		if gm, ok := g.(map[string]any); ok {
			c.geometry(fmt.Sprintf("feature %d", i), gm)
		} else if g != nil {
			c.fail("feature %d: geometry is %T, want an object or null (RFC 7946, 3.2)", i, g)
		}
		out = append(out, feat)
	}
	return out, c.broken
}

// geoCheck gathers the rules a GeoJSON document breaks.
type geoCheck struct{ broken []string }

func (c *geoCheck) fail(format string, args ...any) {
	c.broken = append(c.broken, fmt.Sprintf(format, args...))
}

func (c *geoCheck) noCRS(v any) {
	switch v := v.(type) {
	case map[string]any:
		if _, ok := v["crs"]; ok {
			c.fail("has a crs member (RFC 7946, 4)")
		}
		for _, m := range v {
			c.noCRS(m)
		}
	case []any:
		for _, m := range v {
			c.noCRS(m)
		}
	}
}

func (c *geoCheck) geometry(where string, g map[string]any) {
	coords := g["coordinates"]
	switch g["type"] {
	case "Point":
		c.position(where, coords)
	case "MultiPoint":
		for _, p := range c.array(where, coords) {
			c.position(where, p)
		}
	case "LineString":
		line := c.array(where, coords)
		if len(line) < 2 {
			c.fail("%s: LineString of %d positions (RFC 7946, 3.1.4)", where, len(line))
		}
		for _, p := range line {
			c.position(where, p)
		}
	case "Polygon":
		c.polygon(where, c.array(where, coords))
	case "MultiPolygon":
		for _, poly := range c.array(where, coords) {
			c.polygon(where, c.array(where, poly))
		}
	default:
		c.fail("%s: geometry type %v not expected here", where, g["type"])
	}
}

// array returns v as a JSON array, failing when it is not one.
func (c *geoCheck) array(where string, v any) []any {
	a, ok := v.([]any)
	if !ok {
		c.fail("%s: coordinates %v are not an array (RFC 7946, 3.1)", where, v)
	}
	return a
}

func (c *geoCheck) position(where string, p any) [2]float64 {
	a, _ := p.([]any)
	var lon, lat float64
	ok := len(a) == 2
	if ok {
		lon, ok = a[0].(float64)
	}
	if ok {
		lat, ok = a[1].(float64)
	}
	if !ok {
		c.fail("%s: position %v is not [lon, lat] (RFC 7946, 3.1.1)", where, p)
		return [2]float64{}
	}
	// Latitude written first shows as a latitude beyond ±90° whenever the
	// longitude is (as for a site in Australia, 151°E).
	if lon < -180 || lon > 180 || lat < -90 || lat > 90 {
		c.fail("%s: position %v outside WGS 84 ranges; longitude first (RFC 7946, 3.1.1 and 4)", where, p)
	}
	return [2]float64{lon, lat}
}

func (c *geoCheck) polygon(where string, rings []any) {
	for i, r := range rings {
		var pts [][2]float64
		for _, p := range c.array(where, r) {
			pts = append(pts, c.position(where, p))
		}
		if len(pts) < 4 || pts[0] != pts[len(pts)-1] {
			c.fail("%s: ring %d is not closed with 4 or more positions (RFC 7946, 3.1.6)", where, i)
			continue
		}
		var area float64 // shoelace, longitude east and latitude north: positive when counterclockwise
		for j := 0; j+1 < len(pts); j++ {
			area += pts[j][0]*pts[j+1][1] - pts[j+1][0]*pts[j][1]
		}
		if (i == 0) != (area > 0) {
			c.fail("%s: ring %d breaks the right-hand rule, exterior counterclockwise and holes clockwise (RFC 7946, 3.1.6)", where, i)
		}
	}
}

// The checker finds each broken rule in a document that breaks only that
// one, and nothing in a correct document with a polygon and a hole, so
// that its passing on the outputs means something.
func TestRFC7946Checker(t *testing.T) {
	// The polygon with a hole of RFC 7946, Appendix A.3 (from memory):
	// exterior counterclockwise, hole clockwise.
	const (
		exterior = `[[100.0,0.0],[101.0,0.0],[101.0,1.0],[100.0,1.0],[100.0,0.0]]`
		hole     = `[[100.8,0.8],[100.8,0.2],[100.2,0.2],[100.2,0.8],[100.8,0.8]]`
		reversed = `[[100.0,0.0],[100.0,1.0],[101.0,1.0],[101.0,0.0],[100.0,0.0]]`
		ccwHole  = `[[100.8,0.8],[100.2,0.8],[100.2,0.2],[100.8,0.2],[100.8,0.8]]`
	)
	collection := func(geometries ...string) []byte {
		var items []string
		for _, g := range geometries {
			items = append(items, `{"type":"Feature","geometry":`+g+`,"properties":{"site":"a"}}`)
		}
		return []byte(`{"type":"FeatureCollection","features":[` + strings.Join(items, ",") + `]}`)
	}
	polygon := func(rings ...string) string {
		return `{"type":"Polygon","coordinates":[` + strings.Join(rings, ",") + `]}`
	}
	good := collection(
		`{"type":"Point","coordinates":[151.2093,-33.8688]}`,
		`{"type":"LineString","coordinates":[[8.5,47.3],[8.6,47.35]]}`,
		polygon(exterior, hole),
		`{"type":"MultiPolygon","coordinates":[[`+exterior+`,`+hole+`]]}`,
		`null`,
	)
	if features, broken := rfc7946(good); len(broken) != 0 || len(features) != 5 {
		t.Errorf("correct document: %d features, rules broken %q", len(features), broken)
	}

	for _, tc := range []struct {
		name string
		doc  []byte
		want string // the rule reported, with its section
	}{
		{"crs member", []byte(`{"type":"FeatureCollection","crs":{"type":"name","properties":{"name":"urn:ogc:def:crs:OGC:1.3:CRS84"}},"features":[]}`),
			"crs member (RFC 7946, 4)"},
		{"crs member in a feature", []byte(`{"type":"FeatureCollection","features":[{"type":"Feature","crs":null,"geometry":null,"properties":null}]}`),
			"crs member (RFC 7946, 4)"},
		{"latitude first", collection(`{"type":"Point","coordinates":[-33.8688,151.2093]}`),
			"longitude first (RFC 7946, 3.1.1 and 4)"},
		{"clockwise exterior", collection(polygon(reversed)), "ring 0 breaks the right-hand rule"},
		{"counterclockwise hole", collection(polygon(exterior, ccwHole)), "ring 1 breaks the right-hand rule"},
		{"clockwise exterior in a MultiPolygon", collection(`{"type":"MultiPolygon","coordinates":[[` + reversed + `,` + hole + `]]}`),
			"ring 0 breaks the right-hand rule"},
		{"open ring", collection(polygon(`[[100.0,0.0],[101.0,0.0],[101.0,1.0],[100.0,1.0]]`)), "not closed with 4 or more positions (RFC 7946, 3.1.6)"},
		{"line of one position", collection(`{"type":"LineString","coordinates":[[8.5,47.3]]}`), "LineString of 1 positions (RFC 7946, 3.1.4)"},
		{"no properties", []byte(`{"type":"FeatureCollection","features":[{"type":"Feature","geometry":null}]}`), "lacks geometry or properties (RFC 7946, 3.2)"},
		{"not a collection", []byte(`{"type":"Feature","geometry":null,"properties":null}`), "want FeatureCollection (RFC 7946, 3.3)"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			_, broken := rfc7946(tc.doc)
			if len(broken) != 1 || !strings.Contains(broken[0], tc.want) {
				t.Errorf("rules broken %q, want exactly one saying %q", broken, tc.want)
			}
		})
	}
}

func byProperty(features []map[string]any, key string) map[any]map[string]any {
	out := map[any]map[string]any{}
	for _, f := range features {
		p := f["properties"].(map[string]any)
		out[p[key]] = f
	}
	return out
}

func TestSitesGeoJSON(t *testing.T) {
	dir := written(t)
	features := checkRFC7946(t, SitesFile, read(t, dir, SitesFile))
	if len(features) != len(fixture) {
		t.Fatalf("%d features, want one per site (%d)", len(features), len(fixture))
	}
	sites := byProperty(features, "site")
	// Longitude first (RFC 7946, 3.1.1): the register has PS-02 at
	// lat -33.8688, lon 151.2093.
	if c := sites["PS-02"]["geometry"].(map[string]any)["coordinates"].([]any); c[0] != 151.2093 || c[1] != -33.8688 {
		t.Errorf("PS-02 at %v, want [151.2093 -33.8688]", c)
	}
	// A mobile unit is where its last window was.
	if c := sites["T-7"]["geometry"].(map[string]any)["coordinates"].([]any); c[0] != 8.9 || c[1] != 47.36 {
		t.Errorf("T-7 at %v, want its last window's position [8.9 47.36]", c)
	}
	if g := sites["X-9"]["geometry"]; g != nil {
		t.Errorf("X-9 has no position, geometry %v, want null", g)
	}
	p := sites["PS-01"]["properties"].(map[string]any)
	want := map[string]any{
		"site": "PS-01", "name": "Aare North", "capacity_kw": 450.0, "elevation_m": 540.5, "active": true,
		"register_regime": "summer",                    // the register's own "regime" column, renamed
		"regime":          2.0, "dominant_regime": 1.0, // 3 windows each: the lower ID
		"regime_name": "worn bearing, \"B\"", "regime_status": "fault", // the user's label of regime 2
		"windows":  6.0,
		"switches": 1.0, "last_switch": "2025-03-04T00:00:00Z", "last_switch_onset": "2025-03-02T00:00:00Z",
		"col": 2.0, "row": 0.0, "qe": 0.35, "unfamiliar": false, "unfamiliar_windows": 0.0, "mobile": false,
		"home_lon": 7.4474, "home_lat": 46.948,
		"likely_condition": "", "condition_confidence": 0.0, // a run without label knowledge
	}
	for k, v := range want {
		if p[k] != v {
			t.Errorf("PS-01: %s = %v (%T), want %v", k, p[k], p[k], v)
		}
	}
	// One shares field, an object by regime ID, whatever the number of
	// regimes: the schema stays the same from run to run.
	if got := fmt.Sprint(p["shares"]); got != "map[1:0.5 2:0.5 3:0]" {
		t.Errorf("PS-01: shares %s, want map[1:0.5 2:0.5 3:0]", got)
	}
	if len(p) != len(want)+1 {
		t.Errorf("PS-01 has %d properties, want %d: %v", len(p), len(want)+1, p)
	}
	if _, err := time.Parse(time.RFC3339, p["last_switch"].(string)); err != nil {
		t.Errorf("last_switch: %v (RFC 3339, 5.6)", err)
	}
	q := sites["X-9"]["properties"].(map[string]any)
	if q["unfamiliar"] != true || q["unfamiliar_windows"] != 1.0 || q["last_switch"] != nil || q["name"] != nil {
		t.Errorf("X-9 properties %v: want unfamiliar, 1 unfamiliar window, no last switch, no register name", q)
	}
	// T-7's switch had no drift before it (Onset equal to Time).
	if q := sites["T-7"]["properties"].(map[string]any); q["last_switch"] != "2025-03-03T00:00:00Z" || q["last_switch_onset"] != nil {
		t.Errorf("T-7 last switch %v, onset %v; want 2025-03-03T00:00:00Z and null", q["last_switch"], q["last_switch_onset"])
	}
	if q := sites["T-7"]["properties"].(map[string]any); q["mobile"] != true || q["home_lon"] != nil || q["home_lat"] != nil {
		t.Errorf("T-7 properties %v: want mobile, with no home position (it is not registered)", q)
	}
	// Floats keep a decimal point, so a GIS reads the column as Real.
	if doc := string(read(t, dir, SitesFile)); !strings.Contains(doc, `"3":0.0`) || !strings.Contains(doc, `"3":1.0`) {
		t.Errorf("whole shares are not written as reals:\n%s", doc)
	}
}

func TestRegimesAndTracksGeoJSON(t *testing.T) {
	dir := written(t)
	regimes := byProperty(checkRFC7946(t, RegimesFile, read(t, dir, RegimesFile)), "regime")
	if len(regimes) != 3 {
		t.Fatalf("%d regime features, want 3", len(regimes))
	}
	// Last regimes: PS-01 2, PS-02 3, T-7 3, X-9 2 (not located).
	for id, want := range map[float64]struct {
		sites  float64
		ids    string
		points int
	}{1: {0, "", 0}, 2: {2, "PS-01,X-9", 1}, 3: {2, "PS-02,T-7", 2}} {
		f := regimes[id]
		p := f["properties"].(map[string]any)
		if p["sites"] != want.sites || p["site_ids"] != want.ids {
			t.Errorf("regime %v: sites %v %q, want %v %q", id, p["sites"], p["site_ids"], want.sites, want.ids)
		}
		n := 0
		if g, ok := f["geometry"].(map[string]any); ok {
			n = len(g["coordinates"].([]any))
		}
		if n != want.points {
			t.Errorf("regime %v: %d points, want %d", id, n, want.points)
		}
		if c, _ := p["colour"].(string); !regexp.MustCompile(`^#[0-9a-f]{6}$`).MatchString(c) {
			t.Errorf("regime %v: colour %q is not a hex colour", id, c)
		}
	}
	if d := regimes[3.0]["properties"].(map[string]any)["description"]; d != "low load <idle> & quiet" {
		t.Errorf("description %q", d)
	}

	tracks := checkRFC7946(t, TracksFile, read(t, dir, TracksFile))
	// T-7: regime 1 over days 0–1, then 3 over days 2–4, the second line
	// starting where the first ended. (8.8, 47.38) lies on the straight
	// line from (8.7, 47.4) to (8.9, 47.36), so simplification drops it.
	if len(tracks) != 2 {
		t.Fatalf("%d track features, want 2", len(tracks))
	}
	wantLines := [][][2]float64{{{8.5, 47.3}, {8.6, 47.35}}, {{8.6, 47.35}, {8.7, 47.4}, {8.9, 47.36}}}
	for i, f := range tracks {
		c := f["geometry"].(map[string]any)["coordinates"].([]any)
		if fmt.Sprint(c) != fmt.Sprint(toAny(wantLines[i])) {
			t.Errorf("track %d: %v, want %v", i, c, wantLines[i])
		}
	}
	if p := tracks[1]["properties"].(map[string]any); p["regime"] != 3.0 || p["start"] != "2025-03-03T00:00:00Z" || p["end"] != "2025-03-06T00:00:00Z" || p["windows"] != 3.0 {
		t.Errorf("second track properties %v", p)
	}
}

func toAny(line [][2]float64) []any {
	var out []any
	for _, p := range line {
		out = append(out, []any{p[0], p[1]})
	}
	return out
}

// ogrinfo (GDAL, Debian gdal-bin) is what GIS desktops read GeoJSON with:
// it must see the right feature counts, field types and WGS 84.
func TestOgrinfo(t *testing.T) {
	ogrinfo := tool(t, "ogrinfo")
	dir := written(t)
	tests := []struct {
		file string
		want ogrLayer
	}{
		{SitesFile, ogrLayer{"Point", 4, map[string]string{
			"id":   "String", // GDAL's field for the Feature id (the site; RFC 7946, 3.2)
			"site": "String", "name": "String", "capacity_kw": "Integer", "elevation_m": "Real",
			"active": "Integer(Boolean)", "register_regime": "String",
			"regime": "Integer", "regime_name": "String", "regime_status": "String", "dominant_regime": "Integer", "shares": "String(JSON)",
			"windows": "Integer", "switches": "Integer", "last_switch": "DateTime", "last_switch_onset": "DateTime",
			"col": "Integer", "row": "Integer", "qe": "Real",
			"unfamiliar": "Integer(Boolean)", "unfamiliar_windows": "Integer", "mobile": "Integer(Boolean)",
			"home_lon": "Real", "home_lat": "Real", "likely_condition": "String", "condition_confidence": "Real",
		}}},
		{RegimesFile, ogrLayer{"Multi Point", 3, map[string]string{
			"regime": "Integer", "regime_name": "String", "regime_status": "String", "description": "String", "levels": "String(JSON)",
			"colour": "String", "sites": "Integer", "site_ids": "String", "units": "Integer",
		}}},
		{TracksFile, ogrLayer{"Line String", 2, map[string]string{
			"site": "String", "regime": "Integer", "start": "DateTime", "end": "DateTime", "windows": "Integer", "colour": "String",
		}}},
	}
	for _, tc := range tests {
		t.Run(tc.file, func(t *testing.T) {
			out, err := exec.Command(ogrinfo, "-ro", "-al", "-so", filepath.Join(dir, tc.file)).CombinedOutput()
			if err != nil {
				t.Fatalf("ogrinfo: %v\n%s", err, out)
			}
			tc.want.check(t, string(out))
		})
	}
}

// ogrLayer is what ogrinfo -so must say of a layer.
type ogrLayer struct {
	geometry string // "None" for a table without geometry
	count    int
	fields   map[string]string // every field of the layer, with its type
}

// check compares a layer's summary by ogrinfo -so with want: geometry
// type, feature count, WGS 84 when it has geometry, and the fields.
func (want ogrLayer) check(t *testing.T, s string) {
	t.Helper()
	if !strings.Contains(s, "Geometry: "+want.geometry+"\n") {
		t.Errorf("geometry is not %s:\n%s", want.geometry, s)
	}
	if !strings.Contains(s, fmt.Sprintf("Feature Count: %d\n", want.count)) {
		t.Errorf("feature count is not %d:\n%s", want.count, s)
	}
	if want.geometry != "None" && !strings.Contains(s, `GEOGCRS["WGS 84"`) && !strings.Contains(s, `GEOGCS["WGS 84"`) {
		t.Errorf("layer is not WGS 84:\n%s", s)
	}
	types := map[string]string{}
	for _, m := range regexp.MustCompile(`(?m)^(\w+): (\S+) \(`).FindAllStringSubmatch(s, -1) {
		types[m[1]] = m[2]
	}
	for f, w := range want.fields {
		if types[f] != w {
			t.Errorf("field %s: %q, want %q", f, types[f], w)
		}
	}
	if len(types) != len(want.fields) {
		t.Errorf("fields %v, want %d", types, len(want.fields))
	}
}

func TestRoundedCoordinates(t *testing.T) {
	r := fixtureRun()
	r.Register.Sites[0].Lon, r.Register.Sites[0].Lat = 7.123456789, 46.987654321
	dir := filepath.Join(t.TempDir(), "out")
	if err := Write(dir, r); err != nil {
		t.Fatal(err)
	}
	sites := byProperty(checkRFC7946(t, SitesFile, read(t, dir, SitesFile)), "site")
	c := sites["PS-01"]["geometry"].(map[string]any)["coordinates"].([]any)
	// 6 decimals, about 10 cm (RFC 7946, 11.2).
	if c[0] != 7.123457 || c[1] != 46.987654 {
		t.Errorf("coordinates %v, want [7.123457 46.987654]", c)
	}
}
