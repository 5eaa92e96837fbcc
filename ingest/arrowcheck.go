package ingest

import (
	"bufio"
	"bytes"
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"os"
)

// The Arrow IPC readers size some slices from vector lengths in the
// flatbuffer metadata (the fields of a schema, the children of a field,
// key-value metadata) before reading them, and flatbuffers carry no
// verifier in Go: one changed byte of a footer asked for terabytes. The
// checks here walk the metadata the Arrow columnar format defines
// (format/Schema.fbs, File.fbs and Message.fbs of apache/arrow) and refuse
// any vector that could not fit in the bytes it is read from, and nesting
// deeper than maxArrowDepth (a cycle of child offsets would never end),
// before the readers see it.

// maxArrowDepth bounds the nesting of fields; the dumps kinmap reads are
// flat, and nested types are refused later anyway.
const maxArrowDepth = 64

// maxArrowMeta bounds the metadata of one message, as the Arrow reader's
// own default limit does.
const maxArrowMeta = 64 << 20

// maxArrowBody bounds the body of one message of a compressed stream,
// whose size is not known before it is read (1 GiB); the body of a plain
// file's message must fit in the file.
const maxArrowBody = 1 << 30

var errArrowMeta = errors.New("damaged Arrow metadata (a length or offset points outside it)")

// flatbuf is a flatbuffer being checked.
type flatbuf []byte

func (b flatbuf) u32(p int) (int, bool) {
	if p < 0 || p+4 > len(b) {
		return 0, false
	}
	return int(binary.LittleEndian.Uint32(b[p:])), true
}

// table checks the table at p and its vtable and returns the vtable.
func (b flatbuf) table(p int) (vt int, ok bool) {
	so, ok := b.u32(p)
	if !ok {
		return 0, false
	}
	vt = p - int(int32(uint32(so)))
	if vt < 0 || vt+4 > len(b) {
		return 0, false
	}
	size := int(binary.LittleEndian.Uint16(b[vt:]))
	return vt, size >= 4 && vt+size <= len(b)
}

// field returns where field i of the table at t lies, 0 when absent.
func (b flatbuf) field(t, vt, i int) int {
	size := int(binary.LittleEndian.Uint16(b[vt:]))
	if 4+2*i+2 > size {
		return 0
	}
	off := int(binary.LittleEndian.Uint16(b[vt+4+2*i:]))
	if off == 0 {
		return 0
	}
	return t + off
}

// ref follows the offset in field i of the table at t; 0 when absent.
func (b flatbuf) ref(t, vt, i int) (int, error) {
	p := b.field(t, vt, i)
	if p == 0 {
		return 0, nil
	}
	off, ok := b.u32(p)
	if !ok || p+off >= len(b) {
		return 0, errArrowMeta
	}
	return p + off, nil
}

// vector checks the vector in field i of the table at t, of elements of
// size bytes, and returns its first element and length.
func (b flatbuf) vector(t, vt, i, size int) (start, n int, err error) {
	v, err := b.ref(t, vt, i)
	if err != nil || v == 0 {
		return 0, 0, err
	}
	n, ok := b.u32(v)
	if !ok || n > (len(b)-v-4)/size {
		return 0, 0, errArrowMeta
	}
	return v + 4, n, nil
}

// tables checks the vector of tables in field i of the table at t with
// check.
func (b flatbuf) tables(t, vt, i int, check func(p int) error) error {
	start, n, err := b.vector(t, vt, i, 4)
	if err != nil {
		return err
	}
	for k := range n {
		p := start + 4*k
		off, _ := b.u32(p)
		if err := check(p + off); err != nil {
			return err
		}
	}
	return nil
}

// keyValues checks a key-value vector (KeyValue: key, value strings).
func (b flatbuf) keyValues(t, vt, i int) error {
	return b.tables(t, vt, i, func(p int) error {
		kvt, ok := b.table(p)
		if !ok {
			return errArrowMeta
		}
		for f := range 2 {
			if _, _, err := b.vector(p, kvt, f, 1); err != nil {
				return err
			}
		}
		return nil
	})
}

// arrowField checks a Field: name 0, type 3, dictionary 4, children 5,
// custom_metadata 6.
func (b flatbuf) arrowField(p, depth int) error {
	vt, ok := b.table(p)
	if !ok || depth > maxArrowDepth {
		return errArrowMeta
	}
	if _, _, err := b.vector(p, vt, 0, 1); err != nil {
		return err
	}
	for _, f := range []int{3, 4} {
		if q, err := b.ref(p, vt, f); err != nil {
			return err
		} else if q != 0 {
			if _, ok := b.table(q); !ok {
				return errArrowMeta
			}
		}
	}
	if err := b.tables(p, vt, 5, func(q int) error { return b.arrowField(q, depth+1) }); err != nil {
		return err
	}
	return b.keyValues(p, vt, 6)
}

// arrowSchema checks a Schema: fields 1, custom_metadata 2, features 3.
func (b flatbuf) arrowSchema(p int) error {
	vt, ok := b.table(p)
	if !ok {
		return errArrowMeta
	}
	if err := b.tables(p, vt, 1, func(q int) error { return b.arrowField(q, 0) }); err != nil {
		return err
	}
	if err := b.keyValues(p, vt, 2); err != nil {
		return err
	}
	_, _, err := b.vector(p, vt, 3, 8)
	return err
}

// checkArrowMessage checks the metadata of one message (Message: header
// type 1, header 2, body length 3, custom_metadata 4) and returns the
// length of the body that follows it.
func checkArrowMessage(meta []byte) (body int64, err error) {
	b := flatbuf(meta)
	root, ok := b.u32(0)
	if !ok {
		return 0, errArrowMeta
	}
	vt, ok := b.table(root)
	if !ok {
		return 0, errArrowMeta
	}
	if err := b.keyValues(root, vt, 4); err != nil {
		return 0, err
	}
	if p := b.field(root, vt, 3); p != 0 {
		if p+8 > len(b) {
			return 0, errArrowMeta
		}
		body = int64(binary.LittleEndian.Uint64(b[p:]))
	}
	h, err := b.ref(root, vt, 2)
	if err != nil || h == 0 {
		return body, err
	}
	var kind byte
	if p := b.field(root, vt, 1); p != 0 && p < len(b) {
		kind = b[p]
	}
	switch kind {
	case 1: // Schema
		err = b.arrowSchema(h)
	case 2: // DictionaryBatch: data 1 is a RecordBatch
		hvt, ok := b.table(h)
		if !ok {
			return 0, errArrowMeta
		}
		if h, err = b.ref(h, hvt, 1); err == nil && h != 0 {
			err = b.recordBatch(h)
		}
	case 3:
		err = b.recordBatch(h)
	default:
		if _, ok := b.table(h); !ok {
			err = errArrowMeta
		}
	}
	if body < 0 {
		err = errArrowMeta
	}
	return body, err
}

// recordBatch checks a RecordBatch: nodes 1 and buffers 2 (16-byte
// structs), variadicBufferCounts 4.
func (b flatbuf) recordBatch(p int) error {
	vt, ok := b.table(p)
	if !ok {
		return errArrowMeta
	}
	for _, f := range [][2]int{{1, 16}, {2, 16}, {4, 8}} {
		if _, _, err := b.vector(p, vt, f[0], f[1]); err != nil {
			return err
		}
	}
	return nil
}

// checkArrowFile checks the footer of an Arrow IPC file (Footer: schema 1,
// dictionaries 2 and recordBatches 3 as 24-byte Blocks, custom_metadata 4)
// and the metadata of every message its blocks point at.
func checkArrowFile(f *os.File) error {
	st, err := f.Stat()
	if err != nil {
		return err
	}
	size := st.Size()
	var tail [10]byte
	if size < 10+8 {
		return errors.New("too short for an Arrow IPC file")
	}
	if _, err := f.ReadAt(tail[:], size-10); err != nil {
		return err
	}
	n := int64(binary.LittleEndian.Uint32(tail[:4]))
	if !bytes.Equal(tail[4:], []byte("ARROW1")) || n < 4 || n > size-10-8 {
		return errArrowMeta
	}
	buf := make(flatbuf, n)
	if _, err := f.ReadAt(buf, size-10-n); err != nil {
		return err
	}
	root, ok := buf.u32(0)
	if !ok {
		return errArrowMeta
	}
	vt, ok := buf.table(root)
	if !ok {
		return errArrowMeta
	}
	schema, err := buf.ref(root, vt, 1)
	if err != nil {
		return err
	}
	if schema != 0 {
		if err := buf.arrowSchema(schema); err != nil {
			return err
		}
	}
	if err := buf.keyValues(root, vt, 4); err != nil {
		return err
	}
	for _, fi := range []int{2, 3} {
		start, count, err := buf.vector(root, vt, fi, 24)
		if err != nil {
			return err
		}
		for k := range count {
			blk := buf[start+24*k:]
			off := int64(binary.LittleEndian.Uint64(blk))
			meta := int64(int32(binary.LittleEndian.Uint32(blk[8:])))
			if off < 0 || meta < 8 || meta > maxArrowMeta || meta > size-off {
				return fmt.Errorf("record batch block %d: %w", k+1, errArrowMeta)
			}
			m := make([]byte, meta)
			if _, err := f.ReadAt(m, off); err != nil {
				return fmt.Errorf("record batch block %d: %w", k+1, errArrowMeta)
			}
			if _, err := checkArrowMessage(messageMeta(m)); err != nil {
				return fmt.Errorf("record batch block %d: %w", k+1, err)
			}
		}
	}
	return nil
}

// messageMeta strips the encapsulation of a message (the continuation
// marker 0xFFFFFFFF, when present, and the length).
func messageMeta(m []byte) []byte {
	if len(m) >= 8 && binary.LittleEndian.Uint32(m) == 0xFFFFFFFF {
		return m[8:]
	}
	return m[min(4, len(m)):]
}

// checkedStream passes an Arrow IPC stream through, message by message,
// once each message's metadata has been checked.
type checkedStream struct {
	r       *bufio.Reader
	limit   int64  // the largest body allowed
	pending []byte // checked bytes not yet read
	body    int64  // body bytes still to pass through unchecked
	err     error
}

func newCheckedStream(r io.Reader, limit int64) *checkedStream {
	return &checkedStream{r: bufio.NewReader(r), limit: limit}
}

func (s *checkedStream) Read(p []byte) (int, error) {
	for len(s.pending) == 0 && s.body == 0 {
		if s.err != nil {
			return 0, s.err
		}
		s.err = s.message()
	}
	if len(s.pending) > 0 {
		n := copy(p, s.pending)
		s.pending = s.pending[n:]
		return n, nil
	}
	n, err := s.r.Read(p[:min(int64(len(p)), s.body)])
	s.body -= int64(n)
	if err == io.EOF && s.body > 0 {
		err = io.ErrUnexpectedEOF
	}
	return n, err
}

// message reads and checks the next message's metadata.
func (s *checkedStream) message() error {
	var head [8]byte
	if _, err := io.ReadFull(s.r, head[:4]); err != nil {
		return err // io.EOF: a stream may end without its end marker
	}
	hn := 4
	n := binary.LittleEndian.Uint32(head[:4])
	if n == 0xFFFFFFFF {
		if _, err := io.ReadFull(s.r, head[4:8]); err != nil {
			return io.ErrUnexpectedEOF
		}
		hn = 8
		n = binary.LittleEndian.Uint32(head[4:8])
	}
	if n == 0 { // end of stream
		s.pending = head[:hn]
		return io.EOF
	}
	if n > maxArrowMeta {
		return errArrowMeta
	}
	msg := make([]byte, hn+int(n))
	copy(msg, head[:hn])
	if _, err := io.ReadFull(s.r, msg[hn:]); err != nil {
		return io.ErrUnexpectedEOF
	}
	body, err := checkArrowMessage(msg[hn:])
	if err != nil {
		return err
	}
	if body > s.limit {
		return fmt.Errorf("message body of %d bytes in a stream of at most %d: %w", body, s.limit, errArrowMeta)
	}
	s.pending, s.body = msg, body
	return nil
}
