package ingest

import (
	"bufio"
	"bytes"
	"compress/gzip"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"os"
	"strings"
)

// source yields the rows of a dump or register file in batches.
type source interface {
	schema() []field
	// next decodes the columns marked in want of the next batch; io.EOF
	// at the end.
	next(want []bool) (*batch, error)
	close() error
}

// input is an open file with its detected format. r reads the content,
// decompressed when the file is gzip.
type input struct {
	f      *os.File
	r      *bufio.Reader
	gz     *gzip.Reader
	format string
}

func openInput(path string) (*input, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, usagef("%v", err)
	}
	in := &input{f: f, r: bufio.NewReaderSize(f, 1<<16)}
	head, err := in.r.Peek(headSize)
	if len(head) == 0 {
		in.close()
		if err != nil && err != io.EOF {
			return nil, err
		}
		return nil, errors.New("empty file")
	}
	in.format = detectFormat(head)
	if in.format == formatGzip {
		if in.gz, err = gzip.NewReader(in.r); err != nil {
			in.close()
			return nil, fmt.Errorf("gzip: %w", err)
		}
		in.r = bufio.NewReaderSize(in.gz, 1<<16)
		head, err = in.r.Peek(headSize)
		if len(head) == 0 {
			in.close()
			if err != nil && err != io.EOF {
				return nil, fmt.Errorf("gzip: %w", err)
			}
			return nil, errors.New("empty file (gzip)")
		}
		switch in.format = detectFormat(head); in.format {
		case formatParquet, formatArrowFile, formatGzip:
			in.close()
			return nil, fmt.Errorf("gzip-compressed %s is not supported; decompress the file first", in.format)
		}
	}
	if in.format == "" {
		in.close()
		if len(bytes.TrimSpace(bytes.TrimPrefix(head, utf8BOM))) == 0 {
			return nil, errors.New("empty file")
		}
		if err := notUTF8(head); err != nil {
			return nil, err
		}
		return nil, errors.New("not a Parquet, Arrow IPC, CSV or GeoJSON file")
	}
	return in, nil
}

func (in *input) close() {
	if in.gz != nil {
		in.gz.Close()
	}
	in.f.Close()
}

// size bounds the bytes the content may hold: the size of a plain file,
// maxArrowBody for a decompressed one.
func (in *input) size() int64 {
	if st, err := in.f.Stat(); err == nil && in.gz == nil {
		return st.Size()
	}
	return maxArrowBody
}

// source opens the columnar reader of the input; GeoJSON has none.
func (in *input) source() (source, error) {
	switch in.format {
	case formatParquet:
		return openParquet(in.f)
	case formatArrowFile:
		return openArrowFile(in.f)
	case formatArrowStream:
		return openArrowStream(in.r, in.size())
	case formatCSV:
		return openCSV(in.r)
	}
	return nil, fmt.Errorf("%s is read as a site register only, not as a dump", in.format)
}

// csvSource reads a CSV file (RFC 4180) with a header row.
type csvSource struct {
	r      *csv.Reader
	fields []field
}

// csvBatchRows is the number of rows of a CSV batch.
const csvBatchRows = 1 << 16

func openCSV(br *bufio.Reader) (*csvSource, error) {
	if b, _ := br.Peek(len(utf8BOM)); bytes.Equal(b, utf8BOM) {
		br.Discard(len(utf8BOM))
	}
	head, _ := br.Peek(1 << 16)
	r := csv.NewReader(br)
	r.Comma = sniffDelimiter(head)
	r.ReuseRecord = true
	header, err := r.Read()
	if err == io.EOF {
		return nil, errors.New("empty file")
	}
	if err != nil {
		return nil, csvError(err)
	}
	s := &csvSource{r: r}
	for i, name := range header {
		name = strings.TrimSpace(name)
		for _, f := range s.fields[:i] {
			if f.name == name && name != "" {
				return nil, &Error{Line: 1, Column: name, Err: errors.New("column name repeated in the header")}
			}
		}
		s.fields = append(s.fields, field{name: name, kind: kindText, typ: "text"})
	}
	return s, nil
}

// sniffDelimiter picks comma, semicolon or tab, whichever occurs most often
// outside quotes in the header line (comma on a tie or when none does).
func sniffDelimiter(head []byte) rune {
	var commas, semis, tabs int
	quoted := false
	for _, c := range head {
		if c == '"' {
			quoted = !quoted
		}
		if quoted {
			continue
		}
		if c == '\n' {
			break
		}
		switch c {
		case ',':
			commas++
		case ';':
			semis++
		case '\t':
			tabs++
		}
	}
	switch {
	case semis > commas && semis >= tabs:
		return ';'
	case tabs > commas && tabs > semis:
		return '\t'
	}
	return ','
}

func csvError(err error) error {
	var pe *csv.ParseError
	if errors.As(err, &pe) {
		return &Error{Line: pe.Line, Err: pe.Err}
	}
	return fmt.Errorf("%w (truncated or corrupt file?)", err)
}

func (s *csvSource) schema() []field { return s.fields }

func (s *csvSource) close() error { return nil }

func (s *csvSource) next(want []bool) (*batch, error) {
	b := &batch{cols: make([]*column, len(s.fields))}
	for i, w := range want {
		if w {
			b.cols[i] = &column{field: &s.fields[i]}
		}
	}
	for b.n < csvBatchRows {
		rec, err := s.r.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, csvError(err)
		}
		line, _ := s.r.FieldPos(0)
		b.lines = append(b.lines, int32(line))
		for i, c := range b.cols {
			if c != nil {
				c.text = append(c.text, rec[i])
			}
		}
		b.n++
	}
	if b.n == 0 {
		return nil, io.EOF
	}
	return b, nil
}
