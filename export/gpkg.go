package export

import (
	"context"
	"database/sql"
	"encoding/binary"
	"fmt"
	"io"
	"math"
	"os"
	"slices"
	"strings"
	"time"

	"github.com/paulmach/orb"
	"github.com/paulmach/orb/encoding/wkb"

	// A pure-Go SQLite: the build stays free of cgo.
	_ "modernc.org/sqlite"
)

// The GeoPackage this package writes follows the OGC GeoPackage Encoding
// Standard 1.3.1 (OGC 12-128r18); requirement numbers and values below
// are from memory of that text.
const (
	gpkgApplicationID = 0x47504B47 // "GPKG" (Requirement 2)
	gpkgUserVersion   = 10301      // 1.3.1: major, two-digit minor, two-digit patch (Requirement 2)
	gpkgSRS           = 4326       // WGS 84 longitude/latitude
	gpkgGeometry      = "geom"     // geometry column of every feature layer
	// gpkgTimeLayout is the DATETIME text of Requirement 5: ISO 8601 in UTC,
	// with Z; kinmap's times are whole seconds, so milliseconds lose nothing.
	gpkgTimeLayout = "2006-01-02T15:04:05.000Z"
)

// gpkgColumn is a column of a GeoPackage table with its GeoPackage data
// type (Table 1 of the standard): TEXT, INTEGER, REAL, BOOLEAN or DATETIME.
type gpkgColumn struct{ name, typ string }

// gpkgLayer is a table of the GeoPackage: a feature layer when geometry
// names its type (POINT, MULTIPOINT, LINESTRING), else an attributes table.
type gpkgLayer struct {
	name, description string
	geometry          string
	columns           []gpkgColumn
	json              []string       // TEXT columns holding JSON, declared application/json (schema extension)
	shapes            []orb.Geometry // per row; nil entries are NULL geometries
	rows              [][]any        // values in column order: nil, string, bool, int, int32, int64, float64, time.Time
}

// featureLayer makes a feature layer of GeoJSON features, with the columns
// and their order taken from the features' properties and each column's
// type from its values, as GDAL reads the same GeoJSON: integers mixed
// with reals make a REAL column, and a column of no value a TEXT one. A
// nested object (shares) is stored as its JSON text.
func featureLayer(name, description, geometry string, features []*feature) (gpkgLayer, error) {
	l := gpkgLayer{name: name, description: description, geometry: geometry}
	if len(features) == 0 {
		return l, fmt.Errorf("layer %s has no feature to take its columns from", name)
	}
	for _, p := range features[0].Properties {
		l.columns = append(l.columns, gpkgColumn{name: p.key})
	}
	for _, f := range features {
		if len(f.Properties) != len(l.columns) {
			return l, fmt.Errorf("layer %s: features with different properties", name)
		}
		row := make([]any, len(l.columns))
		for i, p := range f.Properties {
			if p.key != l.columns[i].name {
				return l, fmt.Errorf("layer %s: property %s where %s was expected", name, p.key, l.columns[i].name)
			}
			v := p.value
			if nested, ok := v.(props); ok {
				b, err := nested.MarshalJSON()
				if err != nil {
					return l, err
				}
				v = string(b)
				if !slices.Contains(l.json, p.key) {
					l.json = append(l.json, p.key)
				}
			}
			row[i] = v
			l.columns[i].typ = widen(l.columns[i].typ, gpkgType(v))
		}
		l.shapes = append(l.shapes, f.Geometry)
		l.rows = append(l.rows, row)
	}
	for i := range l.columns {
		if l.columns[i].typ == "" {
			l.columns[i].typ = "TEXT"
		}
	}
	return l, nil
}

// gpkgLayers are the tables of kinmap.gpkg: the layers of the GeoJSON
// files (tracks only when there are any) and the timeline, switch and
// shared condition tables, with the same fields.
func gpkgLayers(sites, regimes, tracks []*feature, tl []timelineRow, sw []switchRow, sh []sharedRow) ([]gpkgLayer, error) {
	var out []gpkgLayer
	for _, l := range []struct {
		name, description, geometry string
		features                    []*feature
	}{
		{"sites", "one point per site with its regime, as " + SitesFile, "POINT", sites},
		{"regimes", "the located sites of each regime, as " + RegimesFile, "MULTIPOINT", regimes},
		{"tracks", "mobile units' paths by regime segment, as " + TracksFile, "LINESTRING", tracks},
	} {
		if len(l.features) == 0 {
			continue
		}
		layer, err := featureLayer(l.name, l.description, l.geometry, l.features)
		if err != nil {
			return nil, err
		}
		out = append(out, layer)
	}
	return append(out,
		attributesLayer("timeline", "one row per window, as "+TimelineCSVFile, timelineColumns, tl),
		attributesLayer("switches", "one row per regime switch, as "+SwitchesCSVFile, switchColumns, sw),
		attributesLayer("shared", "one row per condition most sites of a regime showed together, as "+SharedCSVFile, sharedColumns, sh),
	), nil
}

// gpkgType is the GeoPackage data type of a value, "" for a null.
func gpkgType(v any) string {
	switch v := v.(type) {
	case nil:
		return ""
	case bool:
		return "BOOLEAN"
	case int, int32, int64:
		return "INTEGER"
	case float64:
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return ""
		}
		return "REAL"
	case time.Time:
		return "DATETIME"
	default:
		return "TEXT"
	}
}

// widen is the type of a column holding values of types a and b.
func widen(a, b string) string {
	switch {
	case a == b || b == "":
		return a
	case a == "":
		return b
	case (a == "INTEGER" || a == "REAL") && (b == "INTEGER" || b == "REAL"):
		return "REAL"
	default:
		return "TEXT"
	}
}

// sqlValue converts a row value for the column type typ: a DATETIME as
// its text, a BOOLEAN as 0 or 1 (Table 1), a value in a TEXT column of
// mixed types as its text, NaN and infinities as NULL.
func sqlValue(v any, typ string) any {
	switch v := v.(type) {
	case nil:
		return nil
	case time.Time:
		return v.UTC().Format(gpkgTimeLayout)
	case float64:
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil
		}
	case bool:
		if typ == "BOOLEAN" {
			if v {
				return 1
			}
			return 0
		}
	}
	if typ == "TEXT" {
		if _, ok := v.(string); !ok {
			return fmt.Sprint(v)
		}
	}
	return v
}

// gpkgBinary encodes a geometry as a GeoPackage binary (Requirement 19 and
// clause 2.1.3): magic "GP", version 0, flags, SRS ID, envelope, then the
// ISO WKB geometry, all little-endian. Points carry no envelope, other
// geometries [minx, maxx, miny, maxy].
func gpkgBinary(g orb.Geometry) ([]byte, error) {
	body, err := wkb.Marshal(g, binary.LittleEndian)
	if err != nil {
		return nil, err
	}
	const littleEndian = 1
	flags := byte(littleEndian)
	_, isPoint := g.(orb.Point)
	if !isPoint {
		flags |= 1 << 1 // envelope contents indicator 1: [minx, maxx, miny, maxy]
	}
	b := []byte{'G', 'P', 0, flags}
	b = binary.LittleEndian.AppendUint32(b, gpkgSRS)
	if !isPoint {
		bound := g.Bound()
		for _, v := range []float64{bound.Min[0], bound.Max[0], bound.Min[1], bound.Max[1]} {
			b = binary.LittleEndian.AppendUint64(b, math.Float64bits(v))
		}
	}
	return append(b, body...), nil
}

// quote quotes an SQL identifier.
func quote(name string) string { return `"` + strings.ReplaceAll(name, `"`, `""`) + `"` }

// writeGeoPackage writes the layers as a GeoPackage to w. SQLite needs a
// file of its own, so the package is built in a temporary file, copied to
// w and removed.
func writeGeoPackage(w io.Writer, layers []gpkgLayer) error {
	f, err := os.CreateTemp("", "kinmap-*.gpkg")
	if err != nil {
		return err
	}
	path := f.Name()
	f.Close()
	defer os.Remove(path)
	if err := buildGeoPackage(path, layers); err != nil {
		return err
	}
	f, err = os.Open(path)
	if err != nil {
		return err
	}
	defer f.Close()
	_, err = io.Copy(w, f)
	return err
}

// gpkgSchema is the core of Requirements 10–11, 13, 18, 21 and 58–59
// (the SRS, contents, geometry columns and extensions tables), and the
// tables of the schema extension (Annex F.9), which declares JSON columns
// as such; the rows of gpkg_spatial_ref_sys are those the standard
// requires (-1, 0 and 4326, Requirement 11).
const gpkgSchema = `
CREATE TABLE gpkg_spatial_ref_sys (
  srs_name TEXT NOT NULL,
  srs_id INTEGER PRIMARY KEY,
  organization TEXT NOT NULL,
  organization_coordsys_id INTEGER NOT NULL,
  definition TEXT NOT NULL,
  description TEXT
);
CREATE TABLE gpkg_contents (
  table_name TEXT NOT NULL PRIMARY KEY,
  data_type TEXT NOT NULL,
  identifier TEXT UNIQUE,
  description TEXT DEFAULT '',
  last_change DATETIME NOT NULL DEFAULT (strftime('%Y-%m-%dT%H:%M:%fZ','now')),
  min_x DOUBLE, min_y DOUBLE, max_x DOUBLE, max_y DOUBLE,
  srs_id INTEGER,
  CONSTRAINT fk_gc_r_srs_id FOREIGN KEY (srs_id) REFERENCES gpkg_spatial_ref_sys(srs_id)
);
CREATE TABLE gpkg_geometry_columns (
  table_name TEXT NOT NULL,
  column_name TEXT NOT NULL,
  geometry_type_name TEXT NOT NULL,
  srs_id INTEGER NOT NULL,
  z TINYINT NOT NULL,
  m TINYINT NOT NULL,
  CONSTRAINT pk_geom_cols PRIMARY KEY (table_name, column_name),
  CONSTRAINT fk_gc_tn FOREIGN KEY (table_name) REFERENCES gpkg_contents(table_name),
  CONSTRAINT fk_gc_srs FOREIGN KEY (srs_id) REFERENCES gpkg_spatial_ref_sys (srs_id)
);
CREATE TABLE gpkg_data_columns (
  table_name TEXT NOT NULL,
  column_name TEXT NOT NULL,
  name TEXT,
  title TEXT,
  description TEXT,
  mime_type TEXT,
  constraint_name TEXT,
  CONSTRAINT pk_gdc PRIMARY KEY (table_name, column_name),
  CONSTRAINT gdc_tn UNIQUE (table_name, name)
);
CREATE TABLE gpkg_data_column_constraints (
  constraint_name TEXT NOT NULL,
  constraint_type TEXT NOT NULL,
  value TEXT,
  min NUMERIC,
  min_is_inclusive BOOLEAN,
  max NUMERIC,
  max_is_inclusive BOOLEAN,
  description TEXT,
  CONSTRAINT gdcc_ntv UNIQUE (constraint_name, constraint_type, value)
);
CREATE TABLE gpkg_extensions (
  table_name TEXT,
  column_name TEXT,
  extension_name TEXT NOT NULL,
  definition TEXT NOT NULL,
  scope TEXT NOT NULL,
  CONSTRAINT ge_tce UNIQUE (table_name, column_name, extension_name)
);
INSERT INTO gpkg_extensions VALUES
  ('gpkg_data_columns', NULL, 'gpkg_schema', 'http://www.geopackage.org/spec/#extension_schema', 'read-write'),
  ('gpkg_data_column_constraints', NULL, 'gpkg_schema', 'http://www.geopackage.org/spec/#extension_schema', 'read-write');
INSERT INTO gpkg_spatial_ref_sys VALUES
  ('Undefined cartesian SRS', -1, 'NONE', -1, 'undefined', 'undefined cartesian coordinate reference system'),
  ('Undefined geographic SRS', 0, 'NONE', 0, 'undefined', 'undefined geographic coordinate reference system'),
  ('WGS 84 geodetic', 4326, 'EPSG', 4326,
   'GEOGCS["WGS 84",DATUM["WGS_1984",SPHEROID["WGS 84",6378137,298.257223563,AUTHORITY["EPSG","7030"]],AUTHORITY["EPSG","6326"]],PRIMEM["Greenwich",0,AUTHORITY["EPSG","8901"]],UNIT["degree",0.0174532925199433,AUTHORITY["EPSG","9122"]],AXIS["Latitude",NORTH],AXIS["Longitude",EAST],AUTHORITY["EPSG","4326"]]',
   'longitude/latitude coordinates in decimal degrees on the WGS 84 spheroid');
`

// rtreeTriggers keep a layer's spatial index in step when a GIS edits the
// layer, as the R-tree extension (Annex F.3) requires; the ST_ functions
// they call are the GIS's. {t}, {c} and {i} stand for the table, geometry
// column and key column. Written from memory of the standard's text.
const rtreeTriggers = `
CREATE TRIGGER "rtree_{t}_{c}_insert" AFTER INSERT ON "{t}"
  WHEN (new."{c}" NOT NULL AND NOT ST_IsEmpty(NEW."{c}"))
BEGIN
  INSERT OR REPLACE INTO "rtree_{t}_{c}" VALUES (NEW."{i}",
    ST_MinX(NEW."{c}"), ST_MaxX(NEW."{c}"), ST_MinY(NEW."{c}"), ST_MaxY(NEW."{c}"));
END;
CREATE TRIGGER "rtree_{t}_{c}_update1" AFTER UPDATE OF "{c}" ON "{t}"
  WHEN OLD."{i}" = NEW."{i}" AND (NEW."{c}" NOTNULL AND NOT ST_IsEmpty(NEW."{c}"))
BEGIN
  INSERT OR REPLACE INTO "rtree_{t}_{c}" VALUES (NEW."{i}",
    ST_MinX(NEW."{c}"), ST_MaxX(NEW."{c}"), ST_MinY(NEW."{c}"), ST_MaxY(NEW."{c}"));
END;
CREATE TRIGGER "rtree_{t}_{c}_update2" AFTER UPDATE OF "{c}" ON "{t}"
  WHEN OLD."{i}" = NEW."{i}" AND (NEW."{c}" ISNULL OR ST_IsEmpty(NEW."{c}"))
BEGIN
  DELETE FROM "rtree_{t}_{c}" WHERE id = OLD."{i}";
END;
CREATE TRIGGER "rtree_{t}_{c}_update3" AFTER UPDATE ON "{t}"
  WHEN OLD."{i}" != NEW."{i}" AND (NEW."{c}" NOTNULL AND NOT ST_IsEmpty(NEW."{c}"))
BEGIN
  DELETE FROM "rtree_{t}_{c}" WHERE id = OLD."{i}";
  INSERT OR REPLACE INTO "rtree_{t}_{c}" VALUES (NEW."{i}",
    ST_MinX(NEW."{c}"), ST_MaxX(NEW."{c}"), ST_MinY(NEW."{c}"), ST_MaxY(NEW."{c}"));
END;
CREATE TRIGGER "rtree_{t}_{c}_update4" AFTER UPDATE ON "{t}"
  WHEN OLD."{i}" != NEW."{i}" AND (NEW."{c}" ISNULL OR ST_IsEmpty(NEW."{c}"))
BEGIN
  DELETE FROM "rtree_{t}_{c}" WHERE id IN (OLD."{i}", NEW."{i}");
END;
CREATE TRIGGER "rtree_{t}_{c}_delete" AFTER DELETE ON "{t}"
  WHEN old."{c}" NOT NULL
BEGIN
  DELETE FROM "rtree_{t}_{c}" WHERE id = OLD."{i}";
END;
`

// buildGeoPackage writes a new GeoPackage file at path, in one transaction
// with prepared inserts. The file is scratch until copied, so SQLite keeps
// no journal and does not sync.
func buildGeoPackage(path string, layers []gpkgLayer) (err error) {
	db, err := sql.Open("sqlite", path)
	if err != nil {
		return err
	}
	defer func() {
		if cerr := db.Close(); err == nil {
			err = cerr
		}
	}()
	ctx := context.Background()
	conn, err := db.Conn(ctx) // pragmas hold per connection
	if err != nil {
		return err
	}
	defer conn.Close()
	for _, p := range []string{
		fmt.Sprintf("PRAGMA application_id = %d", gpkgApplicationID),
		fmt.Sprintf("PRAGMA user_version = %d", gpkgUserVersion),
		"PRAGMA journal_mode = OFF",
		"PRAGMA synchronous = OFF",
	} {
		if _, err := conn.ExecContext(ctx, p); err != nil {
			return fmt.Errorf("%s: %w", p, err)
		}
	}
	tx, err := conn.BeginTx(ctx, nil)
	if err != nil {
		return err
	}
	defer tx.Rollback() // a no-op after Commit
	if _, err := tx.Exec(gpkgSchema); err != nil {
		return fmt.Errorf("GeoPackage tables: %w", err)
	}
	for _, l := range layers {
		if err := writeLayer(tx, l); err != nil {
			return fmt.Errorf("layer %s: %w", l.name, err)
		}
	}
	return tx.Commit()
}

// writeLayer creates one table, registers it and fills it; a feature
// layer also gets its geometry column and R-tree index registered.
func writeLayer(tx *sql.Tx, l gpkgLayer) error {
	defs := []string{`"fid" INTEGER PRIMARY KEY AUTOINCREMENT NOT NULL`}
	cols := []string{}
	if l.geometry != "" {
		defs = append(defs, quote(gpkgGeometry)+" "+l.geometry)
		cols = append(cols, quote(gpkgGeometry))
	}
	for _, c := range l.columns {
		defs = append(defs, quote(c.name)+" "+c.typ)
		cols = append(cols, quote(c.name))
	}
	if _, err := tx.Exec(fmt.Sprintf("CREATE TABLE %s (%s)", quote(l.name), strings.Join(defs, ", "))); err != nil {
		return err
	}
	ins, err := tx.Prepare(fmt.Sprintf("INSERT INTO %s (%s) VALUES (%s)", quote(l.name), strings.Join(cols, ", "),
		strings.TrimSuffix(strings.Repeat("?, ", len(cols)), ", ")))
	if err != nil {
		return err
	}
	defer ins.Close()
	var index *sql.Stmt
	if l.geometry != "" {
		if _, err := tx.Exec(fmt.Sprintf(`CREATE VIRTUAL TABLE %s USING rtree(id, minx, maxx, miny, maxy)`, quote(rtreeName(l.name)))); err != nil {
			return err
		}
		if index, err = tx.Prepare(fmt.Sprintf("INSERT INTO %s VALUES (?, ?, ?, ?, ?)", quote(rtreeName(l.name)))); err != nil {
			return err
		}
		defer index.Close()
	}
	var bound orb.Bound
	located := false
	args := make([]any, len(cols))
	for i, row := range l.rows {
		args = args[:0]
		var g orb.Geometry
		if l.geometry != "" {
			g = l.shapes[i]
			var blob []byte
			if g != nil {
				if blob, err = gpkgBinary(g); err != nil {
					return err
				}
			}
			args = append(args, blob)
		}
		for j, v := range row {
			args = append(args, sqlValue(v, l.columns[j].typ))
		}
		res, err := ins.Exec(args...)
		if err != nil {
			return err
		}
		if g == nil {
			continue
		}
		fid, err := res.LastInsertId()
		if err != nil {
			return err
		}
		b := g.Bound()
		if _, err := index.Exec(fid, b.Min[0], b.Max[0], b.Min[1], b.Max[1]); err != nil {
			return err
		}
		if located {
			bound = bound.Union(b)
		} else {
			bound, located = b, true
		}
	}

	for _, c := range l.json {
		if _, err := tx.Exec(`INSERT INTO gpkg_data_columns (table_name, column_name, name, mime_type) VALUES (?, ?, ?, 'application/json')`, l.name, c, c); err != nil {
			return err
		}
	}
	if l.geometry == "" {
		_, err := tx.Exec(`INSERT INTO gpkg_contents (table_name, data_type, identifier, description) VALUES (?, 'attributes', ?, ?)`,
			l.name, l.name, l.description)
		return err
	}
	var box [4]any // min_x, min_y, max_x, max_y; NULL when nothing is located
	if located {
		box = [4]any{bound.Min[0], bound.Min[1], bound.Max[0], bound.Max[1]}
	}
	if _, err := tx.Exec(`INSERT INTO gpkg_contents (table_name, data_type, identifier, description, min_x, min_y, max_x, max_y, srs_id) VALUES (?, 'features', ?, ?, ?, ?, ?, ?, ?)`,
		l.name, l.name, l.description, box[0], box[1], box[2], box[3], gpkgSRS); err != nil {
		return err
	}
	if _, err := tx.Exec(`INSERT INTO gpkg_geometry_columns VALUES (?, ?, ?, ?, 0, 0)`, l.name, gpkgGeometry, l.geometry, gpkgSRS); err != nil {
		return err
	}
	if _, err := tx.Exec(`INSERT INTO gpkg_extensions VALUES (?, ?, 'gpkg_rtree_index', 'http://www.geopackage.org/spec120/#extension_rtree', 'write-only')`, l.name, gpkgGeometry); err != nil {
		return err
	}
	// The triggers call functions only a GIS provides, so they come after
	// the rows.
	triggers := strings.NewReplacer("{t}", l.name, "{c}", gpkgGeometry, "{i}", "fid").Replace(rtreeTriggers)
	_, err = tx.Exec(triggers)
	return err
}

func rtreeName(table string) string { return "rtree_" + table + "_" + gpkgGeometry }
