package export

import (
	"database/sql"
	"encoding/binary"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/paulmach/orb"
	"github.com/paulmach/orb/encoding/wkb"
)

// ogrinfo (GDAL, Debian gdal-bin) reads every table of kinmap.gpkg with
// the feature counts of the fixture, the geometry types of the GeoJSON
// layers and GeoPackage field types: INTEGER is 64-bit in a GeoPackage
// (Table 1), which GDAL reads as Integer64, BOOLEAN as Integer(Boolean),
// DATETIME as DateTime.
func TestGeoPackageOgrinfo(t *testing.T) {
	ogrinfo := tool(t, "ogrinfo")
	out, err := exec.Command(ogrinfo, "-ro", "-al", "-so", filepath.Join(written(t), GeoPackageFile)).CombinedOutput()
	if err != nil {
		t.Fatalf("ogrinfo: %v\n%s", err, out)
	}
	layers := map[string]string{}
	for _, part := range strings.Split(string(out), "\nLayer name: ")[1:] {
		name, _, _ := strings.Cut(part, "\n")
		layers[name] = part
	}
	tests := []struct {
		layer string
		want  ogrLayer
	}{
		{"sites", ogrLayer{"Point", 4, map[string]string{
			"site": "String", "name": "String", "capacity_kw": "Integer64", "elevation_m": "Real",
			"active": "Integer(Boolean)", "register_regime": "String",
			"regime": "Integer64", "regime_name": "String", "regime_status": "String", "dominant_regime": "Integer64", "shares": "String(JSON)",
			"windows": "Integer64", "switches": "Integer64", "last_switch": "DateTime", "last_switch_onset": "DateTime",
			"col": "Integer64", "row": "Integer64", "qe": "Real",
			"unfamiliar": "Integer(Boolean)", "unfamiliar_windows": "Integer64", "mobile": "Integer(Boolean)",
			"home_lon": "Real", "home_lat": "Real", "likely_condition": "String", "condition_confidence": "Real",
		}}},
		{"regimes", ogrLayer{"Multi Point", 3, map[string]string{
			"regime": "Integer64", "regime_name": "String", "regime_status": "String", "description": "String", "levels": "String(JSON)",
			"colour": "String", "sites": "Integer64", "site_ids": "String", "units": "Integer64",
		}}},
		{"tracks", ogrLayer{"Line String", 2, map[string]string{
			"site": "String", "regime": "Integer64", "start": "DateTime", "end": "DateTime", "windows": "Integer64", "colour": "String",
		}}},
		{"timeline", ogrLayer{"None", len(fixtureRun().Table.Windows), map[string]string{
			"site": "String", "window_start": "DateTime", "window_end": "DateTime", "col": "Integer64", "row": "Integer64",
			"regime": "Integer64", "qe": "Real", "unfamiliar": "Integer(Boolean)", "regime_name": "String", "regime_status": "String",
			"likely_condition": "String", "condition_confidence": "Real",
		}}},
		{"switches", ogrLayer{"None", len(fixtureSwitches), map[string]string{
			"site": "String", "time": "DateTime", "from_regime": "Integer64", "to_regime": "Integer64",
			"windows_before": "Integer64", "windows_after": "Integer64", "confidence": "Real",
			"from_name": "String", "from_status": "String", "to_name": "String", "to_status": "String", "onset": "DateTime",
			"shared_start": "DateTime",
		}}},
		{"shared", ogrLayer{"None", len(fixtureShared), map[string]string{
			"start": "DateTime", "end": "DateTime", "regime": "Integer64", "regime_name": "String", "regime_status": "String",
			"like_regime": "Integer64", "like_name": "String", "like_status": "String",
			"sites": "Integer64", "regime_sites": "Integer64", "site_ids": "String", "p_value": "Real",
		}}},
	}
	if len(layers) != len(tests) {
		t.Errorf("%d layers, want %d:\n%s", len(layers), len(tests), out)
	}
	for _, tc := range tests {
		t.Run(tc.layer, func(t *testing.T) {
			s, ok := layers[tc.layer]
			if !ok {
				t.Fatalf("no layer %s:\n%s", tc.layer, out)
			}
			tc.want.check(t, s)
		})
	}
}

// validateGPKG is GDAL's GeoPackage validator (Debian python3-gdal), which
// checks a file against the requirements of the standard.
const validateGPKG = "/usr/lib/python3/dist-packages/osgeo_utils/samples/validate_gpkg.py"

// GDAL's validator passes kinmap.gpkg with its extra checks and warnings
// taken as errors, and fails a copy missing a required SRS row, so that
// its passing means something.
func TestGeoPackageValidates(t *testing.T) {
	python := tool(t, "/usr/bin/python3")
	if _, err := os.Stat(validateGPKG); err != nil {
		if os.Getenv("KINMAP_REQUIRE_TOOLS") == "1" {
			t.Fatalf("GDAL's validator is required (KINMAP_REQUIRE_TOOLS=1): %v", err)
		}
		t.Skipf("GDAL's validator (python3-gdal) not found: %v", err)
	}
	path := filepath.Join(written(t), GeoPackageFile)
	if out, err := exec.Command(python, validateGPKG, "--extra", "--warning-as-error", path).CombinedOutput(); err != nil {
		t.Errorf("validate_gpkg.py: %v\n%s", err, out)
	}
	broken := filepath.Join(t.TempDir(), "broken.gpkg")
	copyFile(t, path, broken)
	db := openGPKG(t, broken)
	if _, err := db.Exec(`DELETE FROM gpkg_spatial_ref_sys WHERE srs_id = 0`); err != nil {
		t.Fatal(err)
	}
	db.Close()
	if out, err := exec.Command(python, validateGPKG, broken).CombinedOutput(); err == nil {
		t.Errorf("validate_gpkg.py passes a GeoPackage without the undefined geographic SRS:\n%s", out)
	}
}

func copyFile(t *testing.T, from, to string) {
	t.Helper()
	src, err := os.Open(from)
	if err != nil {
		t.Fatal(err)
	}
	defer src.Close()
	dst, err := os.Create(to)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := io.Copy(dst, src); err != nil {
		t.Fatal(err)
	}
	if err := dst.Close(); err != nil {
		t.Fatal(err)
	}
}

func openGPKG(t *testing.T, path string) *sql.DB {
	t.Helper()
	db, err := sql.Open("sqlite", path)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { db.Close() })
	return db
}

// The file read with the SQLite driver itself: the header fields, the
// registered tables and SRS, the spatial indexes, DATETIME text and the
// geometry encoding, against the OGC GeoPackage Encoding Standard 1.3.1
// (OGC 12-128r18; requirement numbers from memory).
func TestGeoPackageContents(t *testing.T) {
	dir := written(t)
	db := openGPKG(t, filepath.Join(dir, GeoPackageFile))
	var appID, userVersion int
	if err := db.QueryRow(`PRAGMA application_id`).Scan(&appID); err != nil {
		t.Fatal(err)
	}
	if err := db.QueryRow(`PRAGMA user_version`).Scan(&userVersion); err != nil {
		t.Fatal(err)
	}
	// Requirement 2: "GPKG" in ASCII; 1.3.1 as 10301.
	if appID != 0x47504B47 || userVersion != 10301 {
		t.Errorf("application_id %#x, user_version %d; want 0x47504b47 (GPKG), 10301", appID, userVersion)
	}

	// Requirement 11: rows -1, 0 and 4326 (EPSG).
	srs := query(t, db, `SELECT srs_id, organization, organization_coordsys_id FROM gpkg_spatial_ref_sys ORDER BY srs_id`)
	if want := "[[-1 NONE -1] [0 NONE 0] [4326 EPSG 4326]]"; fmt.Sprint(srs) != want {
		t.Errorf("gpkg_spatial_ref_sys %v, want %s", srs, want)
	}
	contents := query(t, db, `SELECT table_name, data_type, IFNULL(srs_id, 'none') FROM gpkg_contents ORDER BY table_name`)
	if want := "[[regimes features 4326] [shared attributes none] [sites features 4326] [switches attributes none] [timeline attributes none] [tracks features 4326]]"; fmt.Sprint(contents) != want {
		t.Errorf("gpkg_contents %v, want %s", contents, want)
	}
	columns := query(t, db, `SELECT table_name, column_name, geometry_type_name, srs_id FROM gpkg_geometry_columns ORDER BY table_name`)
	if want := "[[regimes geom MULTIPOINT 4326] [sites geom POINT 4326] [tracks geom LINESTRING 4326]]"; fmt.Sprint(columns) != want {
		t.Errorf("gpkg_geometry_columns %v, want %s", columns, want)
	}
	// The R-tree extension (Annex F.3): registered, and one entry per
	// feature with a geometry (X-9 has none). The schema extension (Annex
	// F.9) declares shares and levels JSON.
	ext := query(t, db, `SELECT table_name, extension_name FROM gpkg_extensions ORDER BY table_name`)
	if want := "[[gpkg_data_column_constraints gpkg_schema] [gpkg_data_columns gpkg_schema] [regimes gpkg_rtree_index] [sites gpkg_rtree_index] [tracks gpkg_rtree_index]]"; fmt.Sprint(ext) != want {
		t.Errorf("gpkg_extensions %v, want %s", ext, want)
	}
	if dc := query(t, db, `SELECT table_name, column_name, mime_type FROM gpkg_data_columns`); fmt.Sprint(dc) != "[[sites shares application/json] [regimes levels application/json]]" {
		t.Errorf("gpkg_data_columns %v, want sites.shares and regimes.levels as application/json", dc)
	}
	if n := query(t, db, `SELECT COUNT(*) FROM rtree_sites_geom`); fmt.Sprint(n) != "[[3]]" {
		t.Errorf("%v entries in the sites index, want 3", n)
	}
	hits := query(t, db, `SELECT s.site FROM sites s JOIN rtree_sites_geom r ON s.fid = r.id WHERE r.minx <= 152 AND r.maxx >= 150 AND r.miny <= -33 AND r.maxy >= -34`)
	if fmt.Sprint(hits) != "[[PS-02]]" {
		t.Errorf("the index finds %v around Sydney, want PS-02", hits)
	}

	// Requirement 5: DATETIME as ISO 8601 text in UTC with Z. (The
	// driver would read the column as a time; || '' keeps the text.)
	times := query(t, db, `SELECT typeof(window_start), window_start || '' FROM timeline WHERE site = 'PS-01' ORDER BY window_start LIMIT 1`)
	if fmt.Sprint(times) != "[[text 2025-03-01T00:00:00.000Z]]" {
		t.Errorf("first window of PS-01 starts %v, want text 2025-03-01T00:00:00.000Z", times)
	}
	var shares string
	if err := db.QueryRow(`SELECT shares FROM sites WHERE site = 'PS-01'`).Scan(&shares); err != nil {
		t.Fatal(err)
	}
	var m map[string]float64
	if err := json.Unmarshal([]byte(shares), &m); err != nil || m["1"] != 0.5 || m["2"] != 0.5 || m["3"] != 0 {
		t.Errorf("PS-01 shares %q (%v), want 0.5, 0.5 and 0 for regimes 1–3", shares, err)
	}

	// Geometry: "GP", version 0, flags (bit 0 little-endian, bits 1–3 the
	// envelope), SRS ID, then WKB (clause 2.1.3, Requirement 19), at the
	// same position as in sites.geojson.
	var blob []byte
	if err := db.QueryRow(`SELECT geom FROM sites WHERE site = 'PS-02'`).Scan(&blob); err != nil {
		t.Fatal(err)
	}
	if len(blob) < 8 || string(blob[:2]) != "GP" || blob[2] != 0 || blob[3] != 1 || binary.LittleEndian.Uint32(blob[4:8]) != 4326 {
		t.Fatalf("PS-02 geometry header % x, want 47 50 00 01 e6 10 00 00", blob[:min(8, len(blob))])
	}
	g, err := wkb.Unmarshal(blob[8:])
	if err != nil {
		t.Fatal(err)
	}
	if p, ok := g.(orb.Point); !ok || p != (orb.Point{151.2093, -33.8688}) {
		t.Errorf("PS-02 at %v, want POINT(151.2093 -33.8688), longitude first", g)
	}
	if err := db.QueryRow(`SELECT geom FROM tracks ORDER BY fid LIMIT 1`).Scan(&blob); err != nil {
		t.Fatal(err)
	}
	// Envelope [minx, maxx, miny, maxy] of the first track (8.5, 47.3)–(8.6, 47.35).
	var env [4]float64
	for i := range env {
		env[i] = math.Float64frombits(binary.LittleEndian.Uint64(blob[8+8*i:]))
	}
	if blob[3] != 0b011 || env != [4]float64{8.5, 8.6, 47.3, 47.35} {
		t.Errorf("track flags %08b, envelope %v; want 00000011, [8.5 8.6 47.3 47.35]", blob[3], env)
	}
	if null := query(t, db, `SELECT COUNT(*) FROM sites WHERE geom IS NULL`); fmt.Sprint(null) != "[[1]]" {
		t.Errorf("%v sites without geometry, want 1 (X-9)", null)
	}
}

// query returns the rows of a query as text.
func query(t *testing.T, db *sql.DB, q string) [][]string {
	t.Helper()
	rows, err := db.Query(q)
	if err != nil {
		t.Fatalf("%s: %v", q, err)
	}
	defer rows.Close()
	cols, _ := rows.Columns()
	var out [][]string
	for rows.Next() {
		vals := make([]sql.NullString, len(cols))
		ptrs := make([]any, len(cols))
		for i := range vals {
			ptrs[i] = &vals[i]
		}
		if err := rows.Scan(ptrs...); err != nil {
			t.Fatal(err)
		}
		row := make([]string, len(cols))
		for i, v := range vals {
			row[i] = v.String
		}
		out = append(out, row)
	}
	if err := rows.Err(); err != nil {
		t.Fatal(err)
	}
	return out
}

// A fleet of 1000 sites over 8 weeks of daily windows (56,000 timeline
// rows) is written in one transaction with prepared statements, well
// within a few seconds on a shared machine.
func TestGeoPackageSpeed(t *testing.T) {
	if testing.Short() {
		t.Skip("timing test")
	}
	const sites, days = 1000, 56
	t0 := time.Date(2025, 3, 3, 0, 0, 0, 0, time.UTC)
	var tl []timelineRow
	var points []*feature
	for s := range sites {
		id := fmt.Sprintf("S-%04d", s)
		for d := range days {
			start := t0.AddDate(0, 0, d)
			tl = append(tl, timelineRow{Site: id, WindowStart: start, WindowEnd: start.AddDate(0, 0, 1), Col: int32(s % 20), Row: int32(d % 15), Regime: int32(1 + s%6), QE: 0.1 * float64(d), Unfamiliar: d%50 == 0})
		}
		var p props
		p.add("site", id)
		p.add("regime", 1+s%6)
		points = append(points, &feature{Type: "Feature", Geometry: orb.Point{float64(s%360) - 180, float64(s%170) - 85}, Properties: p})
	}
	layers, err := gpkgLayers(points, points[:6], nil, tl, nil, nil)
	if err != nil {
		t.Fatal(err)
	}
	start := time.Now()
	if err := writeGeoPackage(io.Discard, layers); err != nil {
		t.Fatal(err)
	}
	took := time.Since(start)
	t.Logf("%d timeline rows and %d sites written in %v", len(tl), sites, took)
	if took > 3*time.Second {
		t.Errorf("writing took %v, want under 3 s", took)
	}
}
