package ingest

import (
	"bytes"
	"compress/gzip"
	"errors"
	"io"
	"os"
	"path/filepath"
	"testing"
)

// TestErrorsKeepTheirCause checks that a reader's error wraps the error of
// the layer beneath it, so that a caller can tell a damaged gzip header
// from a file cut short with errors.Is.
func TestErrorsKeepTheirCause(t *testing.T) {
	var gz bytes.Buffer
	w := gzip.NewWriter(&gz)
	for range 2000 {
		w.Write([]byte("site,time,channel,value\ns1,2024-01-01T00:00:00Z,temp,1.5\n"))
	}
	w.Close()
	full := gz.Bytes()
	cases := []struct {
		name string
		data []byte
		want error
	}{
		// A gzip member starts 1f 8b 08 (RFC 1952, section 2.3.1); 09 is no
		// compression method gzip knows.
		{"bad header", []byte{0x1f, 0x8b, 0x09, 0, 0, 0, 0, 0, 0, 0xff, 1, 2, 3}, gzip.ErrHeader},
		{"cut short", full[:len(full)/2], io.ErrUnexpectedEOF},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			path := filepath.Join(t.TempDir(), "dump.csv.gz")
			if err := os.WriteFile(path, c.data, 0o644); err != nil {
				t.Fatal(err)
			}
			_, err := Read([]string{path}, DefaultOptions())
			if !errors.Is(err, c.want) {
				t.Errorf("Read: %v; want an error wrapping %v", err, c.want)
			}
		})
	}
}
