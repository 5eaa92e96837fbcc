package ingest

import (
	"bytes"
	"os"
	"testing"
)

func TestDetectFormat(t *testing.T) {
	tests := []struct {
		head string
		want string
	}{
		// Parquet files begin with the magic "PAR1" (parquet-format README,
		// "File Format"); Arrow IPC files with "ARROW1" and streams with the
		// continuation marker 0xFFFFFFFF (Arrow columnar format, "IPC File
		// Format" and "Encapsulated message format"); gzip members with
		// 0x1f 0x8b (RFC 1952 §2.3.1).
		{"PAR1\x15\x04", formatParquet},
		{"ARROW1\x00\x00", formatArrowFile},
		{"\xff\xff\xff\xff\x10\x01\x00\x00", formatArrowStream},
		{"\x1f\x8b\x08\x00", formatGzip},
		{"site,time,value\n", formatCSV},
		{"\xef\xbb\xbfsite;time\n", formatCSV},
		{"PAR", formatCSV}, // too short for the magic: text
		{"  \n{\"type\": \"FeatureCollection\"", formatGeoJSON},
		{"Zürich,1\n", formatCSV},
		{"site,name\nA,Z\xc3", formatCSV}, // a rune cut by the end of the head
		{"", ""},
		{" \r\n\t", ""},
		{"\xef\xbb\xbf", ""},
		{"a,b\x00c", ""},
		{"\x89PNG\r\n\x1a\n", ""},
		{"a,\xff,b", ""},
	}
	for _, tt := range tests {
		if got := detectFormat([]byte(tt.head)); got != tt.want {
			t.Errorf("detectFormat(%q) = %q, want %q", tt.head, got, tt.want)
		}
	}
}

var formats = map[string]bool{"": true, formatParquet: true, formatArrowFile: true, formatArrowStream: true,
	formatCSV: true, formatGeoJSON: true, formatGzip: true}

func FuzzDetectFormat(f *testing.F) {
	f.Add([]byte("PAR1"))
	f.Add([]byte("site,time\n"))
	f.Fuzz(func(t *testing.T, head []byte) {
		got := detectFormat(head)
		if !formats[got] {
			t.Fatalf("detectFormat(%q) = %q, not a format", head, got)
		}
		// Binary formats are told by their first bytes alone.
		for _, magic := range []string{"PAR1", "ARROW1", "\xff\xff\xff\xff", "\x1f\x8b"} {
			if bytes.HasPrefix(head, []byte(magic)) && detectFormat([]byte(magic)) != got {
				t.Fatalf("detectFormat(%q) = %q, but its magic says %q", head, got, detectFormat([]byte(magic)))
			}
		}
		if (got == formatCSV || got == formatGeoJSON) && bytes.IndexByte(head, 0) >= 0 {
			t.Fatalf("detectFormat(%q) = %q for data with a NUL byte", head, got)
		}
	})
}

// FuzzReadCSV reads arbitrary bytes as a dump and as a register: the
// readers must return data or an error, never panic, and data they return
// must keep the promises of Series.
func FuzzReadCSV(f *testing.F) {
	f.Add([]byte(goodCSV))
	dir := f.TempDir()
	f.Fuzz(func(t *testing.T, data []byte) {
		file, err := os.CreateTemp(dir, "fuzz*.csv")
		if err != nil {
			t.Fatal(err)
		}
		path := file.Name()
		defer os.Remove(path)
		if _, err := file.Write(data); err != nil {
			t.Fatal(err)
		}
		file.Close()
		ds, err := Read([]string{path}, DefaultOptions())
		if err == nil {
			checkDataset(t, ds)
		}
		ReadRegister(path, RegisterOptions{})
	})
}

// checkDataset checks the invariants of a result: strictly increasing
// times, one value per time, no NaN or infinity, counts that add up.
func checkDataset(t testing.TB, ds *Dataset) {
	var n int64
	for _, s := range ds.Sites {
		for ch, ser := range s.Series {
			if len(ser.Times) != len(ser.Values) || len(ser.Times) == 0 {
				t.Fatalf("site %q channel %q: %d times, %d values", s.ID, ch, len(ser.Times), len(ser.Values))
			}
			for i, v := range ser.Values {
				if v != v || v > 1.7976931348623157e308 || v < -1.7976931348623157e308 {
					t.Fatalf("site %q channel %q: value %v kept", s.ID, ch, v)
				}
				if i > 0 && ser.Times[i] <= ser.Times[i-1] {
					t.Fatalf("site %q channel %q: times not increasing at %d", s.ID, ch, i)
				}
			}
			n += int64(ser.Len())
		}
		for i := 1; i < s.Track.Len(); i++ {
			if s.Track.Times[i] <= s.Track.Times[i-1] {
				t.Fatalf("site %q: track times not increasing", s.ID)
			}
		}
	}
	if n != ds.Summary.Readings || n == 0 {
		t.Fatalf("%d readings in the series, summary says %d", n, ds.Summary.Readings)
	}
}
