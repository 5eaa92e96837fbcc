package ingest

import (
	"bytes"
	"fmt"
	"unicode/utf8"
)

// The formats detectFormat names: those of dumps, as FileSummary.Format
// reports them, a register, and a compressed file whose content is another
// format.
const (
	formatParquet     = "parquet"
	formatArrowFile   = "arrow-file"
	formatArrowStream = "arrow-stream"
	formatCSV         = "csv"
	formatGeoJSON     = "geojson"
	formatGzip        = "gzip"
)

// headSize is how much of a file detectFormat is given.
const headSize = 4096

var utf8BOM = []byte("\xef\xbb\xbf")

// detectFormat names the format of a file from its first bytes (a few
// kilobytes are best: text formats are told apart by their content). It
// returns "" for an empty head and for binary data of no known format.
//
// Magic bytes: "PAR1" (Parquet), "ARROW1" (Arrow IPC file), the
// continuation marker 0xFFFFFFFF (Arrow IPC stream), 0x1F 0x8B (gzip).
// Other content that is UTF-8 text is GeoJSON when it starts with '{',
// otherwise CSV.
func detectFormat(head []byte) string {
	switch {
	case bytes.HasPrefix(head, []byte("PAR1")):
		return formatParquet
	case bytes.HasPrefix(head, []byte("ARROW1")):
		return formatArrowFile
	case bytes.HasPrefix(head, []byte{0xff, 0xff, 0xff, 0xff}):
		return formatArrowStream
	case bytes.HasPrefix(head, []byte{0x1f, 0x8b}):
		return formatGzip
	}
	text := bytes.TrimPrefix(head, utf8BOM)
	trimmed := bytes.TrimLeft(text, " \t\r\n")
	if len(trimmed) == 0 || !isText(text) {
		return ""
	}
	if trimmed[0] == '{' {
		return formatGeoJSON
	}
	return formatCSV
}

// isText reports whether b is UTF-8 without control characters other than
// tab, CR and LF. A rune cut off at the end of b does not count against it.
func isText(b []byte) bool {
	for len(b) > 0 {
		r, size := utf8.DecodeRune(b)
		if r == utf8.RuneError && size <= 1 {
			return !utf8.FullRune(b)
		}
		if r < 0x20 && r != '\t' && r != '\r' && r != '\n' || r == 0x7f {
			return false
		}
		b = b[size:]
	}
	return true
}

// notUTF8 explains a head that detectFormat refused although it reads as
// text but for bytes that are not UTF-8, such as Latin-1 letters: an
// encoding problem, not a file of an unknown format. It returns nil for
// binary data.
func notUTF8(head []byte) error {
	bad := -1
	for i := 0; i < len(head); {
		r, size := utf8.DecodeRune(head[i:])
		switch {
		case r == utf8.RuneError && size <= 1:
			if !utf8.FullRune(head[i:]) {
				i = len(head)
				continue
			}
			if bad < 0 {
				bad = i
			}
		case r < 0x20 && r != '\t' && r != '\r' && r != '\n' || r == 0x7f:
			return nil
		}
		i += max(size, 1)
	}
	if bad < 0 {
		return nil
	}
	return &Error{Line: bytes.Count(head[:bad], []byte("\n")) + 1,
		Err: fmt.Errorf("text that is not UTF-8 (byte 0x%02x): the file has another encoding; convert it to UTF-8 (for example iconv -f latin1 -t utf-8)", head[bad])}
}
