package ingest

import (
	"bytes"
	"encoding/binary"
	"os"
	"path/filepath"
	"testing"
)

// fuzzRead writes data to a file in dir and reads it as a dump: the
// readers must return data keeping the promises of Series or an error,
// never panic nor run out of memory.
func fuzzRead(t *testing.T, dir string, data []byte) {
	path := filepath.Join(dir, "fuzz.bin")
	if err := os.WriteFile(path, data, 0o644); err != nil {
		t.Fatal(err)
	}
	if ds, err := Read([]string{path}, DefaultOptions()); err == nil {
		checkDataset(t, ds)
	}
}

// seedFile returns the bytes of a small dump written by write.
func seedFile(f *testing.F, write func() string) []byte {
	b, err := os.ReadFile(write())
	if err != nil {
		f.Fatal(err)
	}
	return b
}

// FuzzReadArrowFile reads arbitrary bytes as an Arrow IPC file; one changed
// byte in a footer once made the schema reader ask for terabytes.
func FuzzReadArrowFile(f *testing.F) {
	rec := smallRecord(f)
	defer rec.Release()
	f.Add(seedFile(f, func() string { return writeArrowIPC(f, "seed.arrow", false, rec) }))
	dir := f.TempDir()
	f.Fuzz(func(t *testing.T, data []byte) {
		if !bytes.HasPrefix(data, []byte("ARROW1")) {
			data = append([]byte("ARROW1\x00\x00"), data...)
		}
		fuzzRead(t, dir, data)
	})
}

// FuzzReadArrowStream reads arbitrary bytes as an Arrow IPC stream.
func FuzzReadArrowStream(f *testing.F) {
	rec := smallRecord(f)
	defer rec.Release()
	f.Add(seedFile(f, func() string { return writeArrowIPC(f, "seed.arrows", true, rec) }))
	dir := f.TempDir()
	f.Fuzz(func(t *testing.T, data []byte) {
		if !bytes.HasPrefix(data, []byte{0xff, 0xff, 0xff, 0xff}) {
			data = append([]byte{0xff, 0xff, 0xff, 0xff}, data...)
		}
		fuzzRead(t, dir, data)
	})
}

// FuzzParquetFooter reads a valid Parquet file whose footer (the Thrift
// FileMetaData before the 4-byte length and "PAR1", apache/parquet-format
// README "File Format") is replaced by arbitrary bytes: row counts, offsets
// and types the footer states must be checked against the file.
func FuzzParquetFooter(f *testing.F) {
	rec := smallRecord(f)
	defer rec.Release()
	file := seedFile(f, func() string { return writeArrowParquet(f, "seed.parquet", rec, 10, true) })
	n := int(binary.LittleEndian.Uint32(file[len(file)-8:]))
	body := file[:len(file)-8-n]
	f.Add(file[len(file)-8-n : len(file)-8])
	dir := f.TempDir()
	f.Fuzz(func(t *testing.T, footer []byte) {
		data := append(append([]byte(nil), body...), footer...)
		data = binary.LittleEndian.AppendUint32(data, uint32(len(footer)))
		fuzzRead(t, dir, append(data, "PAR1"...))
	})
}

// TestArrowBytes changes every byte of a small Arrow IPC file and stream in
// turn, as the trial that found one byte of a footer asking for terabytes
// did: each read must end with data or an error. Record batches whose
// stated row count differs from their arrays' once panicked.
func TestArrowBytes(t *testing.T) {
	rec := smallRecord(t)
	defer rec.Release()
	dir := t.TempDir()
	for _, stream := range []bool{false, true} {
		b, err := os.ReadFile(writeArrowIPC(t, "good.arrow", stream, rec))
		if err != nil {
			t.Fatal(err)
		}
		for i := range b {
			values := []byte{0x00, 0xff, b[i] ^ 0x40}
			if testing.Short() {
				values = values[2:]
			}
			for _, v := range values {
				c := bytes.Clone(b)
				c[i] = v
				fuzzRead(t, dir, c)
			}
		}
	}
}
