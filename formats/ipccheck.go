package formats

import (
	"encoding/binary"
	"fmt"
	"io"
)

// Corrupted Arrow IPC metadata can carry vector lengths in the billions,
// and the Arrow library allocates slices of those lengths before looking
// further: the process dies of memory exhaustion, which no recover can
// catch. checkIPCFile walks the flatbuffers of the footer, the schema and
// every record batch message (Arrow columnar format: File.fbs, Schema.fbs,
// Message.fbs) and checks that every offset and vector lies inside its
// buffer before the library sees them.

// fbuf is a flatbuffer with bounds-checked access.
type fbuf []byte

func (b fbuf) u32(p int) (int, error) {
	if p < 0 || p+4 > len(b) {
		return 0, fmt.Errorf("offset %d outside a %d-byte flatbuffer", p, len(b))
	}
	return int(binary.LittleEndian.Uint32(b[p:])), nil
}

func (b fbuf) u16(p int) (int, error) {
	if p < 0 || p+2 > len(b) {
		return 0, fmt.Errorf("offset %d outside a %d-byte flatbuffer", p, len(b))
	}
	return int(binary.LittleEndian.Uint16(b[p:])), nil
}

// deref follows the unsigned offset stored at p.
func (b fbuf) deref(p int) (int, error) {
	u, err := b.u32(p)
	if err != nil {
		return 0, err
	}
	if p+u >= len(b) {
		return 0, fmt.Errorf("offset at %d points outside the flatbuffer", p)
	}
	return p + u, nil
}

// field returns the position of slot in the table at t, or −1 if absent.
func (b fbuf) field(t, slot int) (int, error) {
	so, err := b.u32(t)
	if err != nil {
		return 0, err
	}
	vt := t - int(int32(uint32(so)))
	vsize, err := b.u16(vt)
	if err != nil {
		return 0, err
	}
	if 4+2*slot+2 > vsize {
		return -1, nil
	}
	off, err := b.u16(vt + 4 + 2*slot)
	if err != nil || off == 0 {
		return -1, err
	}
	if t+off >= len(b) {
		return 0, fmt.Errorf("field outside the flatbuffer")
	}
	return t + off, nil
}

// vector returns the start of the elements and the length of the vector
// (or string) in slot, checking it fits; n is −1 when absent.
func (b fbuf) vector(t, slot, elemSize int) (start, n int, err error) {
	p, err := b.field(t, slot)
	if err != nil || p < 0 {
		return 0, -1, err
	}
	v, err := b.deref(p)
	if err != nil {
		return 0, 0, err
	}
	if n, err = b.u32(v); err != nil {
		return 0, 0, err
	}
	if n > (len(b)-v-4)/elemSize {
		return 0, 0, fmt.Errorf("a vector of %d elements does not fit in a %d-byte flatbuffer", n, len(b))
	}
	return v + 4, n, nil
}

// table returns the table in slot, or −1 if absent.
func (b fbuf) table(t, slot int) (int, error) {
	p, err := b.field(t, slot)
	if err != nil || p < 0 {
		return -1, err
	}
	return b.deref(p)
}

// tables calls check on every table of the vector of tables in slot.
func (b fbuf) tables(t, slot int, check func(int) error) error {
	start, n, err := b.vector(t, slot, 4)
	if err != nil {
		return err
	}
	for i := 0; i < n; i++ {
		e, err := b.deref(start + 4*i)
		if err != nil {
			return err
		}
		if err := check(e); err != nil {
			return err
		}
	}
	return nil
}

func (b fbuf) keyValue(t int) error {
	for slot := 0; slot < 2; slot++ {
		if _, _, err := b.vector(t, slot, 1); err != nil {
			return err
		}
	}
	return nil
}

func (b fbuf) arrowField(t, depth int) error {
	if depth > 32 {
		return fmt.Errorf("fields nested deeper than 32")
	}
	if _, _, err := b.vector(t, 0, 1); err != nil { // name
		return err
	}
	if err := b.tables(t, 5, func(c int) error { return b.arrowField(c, depth+1) }); err != nil { // children
		return err
	}
	return b.tables(t, 6, b.keyValue) // custom_metadata
}

func (b fbuf) schema(t int) error {
	if err := b.tables(t, 1, func(f int) error { return b.arrowField(f, 0) }); err != nil {
		return err
	}
	if err := b.tables(t, 2, b.keyValue); err != nil {
		return err
	}
	_, _, err := b.vector(t, 3, 8) // features
	return err
}

// checkIPCFile checks the flatbuffers of an Arrow IPC file of size bytes.
func checkIPCFile(r io.ReaderAt, size int64) error {
	const magic = "ARROW1"
	if size < 2*8+4 {
		return fmt.Errorf("too short for an Arrow IPC file")
	}
	tail := make([]byte, 10)
	if _, err := r.ReadAt(tail, size-10); err != nil {
		return err
	}
	if string(tail[4:]) != magic {
		return fmt.Errorf("no Arrow IPC end marker (the file is truncated)")
	}
	flen := int64(int32(binary.LittleEndian.Uint32(tail)))
	if flen <= 0 || flen > size-10-8 {
		return fmt.Errorf("footer length %d does not fit the file", flen)
	}
	footer := make(fbuf, flen)
	if _, err := r.ReadAt(footer, size-10-flen); err != nil {
		return err
	}
	root, err := footer.deref(0)
	if err != nil {
		return fmt.Errorf("footer: %w", err)
	}
	s, err := footer.table(root, 1)
	if err != nil {
		return fmt.Errorf("footer: %w", err)
	}
	if s < 0 {
		return fmt.Errorf("footer has no schema")
	}
	if err := footer.schema(s); err != nil {
		return fmt.Errorf("schema: %w", err)
	}
	if _, _, err := footer.vector(root, 2, 24); err != nil { // dictionaries
		return fmt.Errorf("footer: %w", err)
	}
	if err := footer.tables(root, 4, footer.keyValue); err != nil {
		return fmt.Errorf("footer: %w", err)
	}
	if err := checkLeadingSchema(r, size); err != nil {
		return fmt.Errorf("leading schema message: %w", err)
	}
	start, n, err := footer.vector(root, 3, 24) // record batches
	if err != nil {
		return fmt.Errorf("footer: %w", err)
	}
	for i := 0; i < n; i++ {
		blk := footer[start+24*i:]
		off := int64(binary.LittleEndian.Uint64(blk))
		mlen := int64(int32(binary.LittleEndian.Uint32(blk[8:])))
		if off < 0 || mlen < 8 || off > size || mlen > size-off {
			return fmt.Errorf("record batch %d lies outside the file", i)
		}
		msg := make(fbuf, mlen)
		if _, err := r.ReadAt(msg, off); err != nil {
			return err
		}
		// A message starts with the continuation marker and its length.
		if binary.LittleEndian.Uint32(msg) == 0xFFFFFFFF {
			msg = msg[8:]
		} else {
			msg = msg[4:]
		}
		if err := msg.recordBatchMessage(); err != nil {
			return fmt.Errorf("record batch %d: %w", i, err)
		}
	}
	return nil
}

func (b fbuf) recordBatchMessage() error {
	root, err := b.deref(0)
	if err != nil {
		return err
	}
	if err := b.tables(root, 4, b.keyValue); err != nil {
		return err
	}
	h, err := b.table(root, 2)
	if err != nil || h < 0 {
		return err
	}
	for slot, size := range map[int]int{1: 16, 2: 16, 4: 8} { // nodes, buffers, variadic counts
		if _, _, err := b.vector(h, slot, size); err != nil {
			return err
		}
	}
	return nil
}

// checkLeadingSchema checks the schema message that follows the 8-byte
// file signature (stream readers use it; file readers use the footer's).
func checkLeadingSchema(r io.ReaderAt, size int64) error {
	head := make([]byte, 8)
	if _, err := r.ReadAt(head, 8); err != nil {
		return err
	}
	if binary.LittleEndian.Uint32(head) != 0xFFFFFFFF {
		return fmt.Errorf("no continuation marker")
	}
	mlen := int64(int32(binary.LittleEndian.Uint32(head[4:])))
	if mlen < 8 || mlen > size-16 {
		return fmt.Errorf("length %d does not fit the file", mlen)
	}
	msg := make(fbuf, mlen)
	if _, err := r.ReadAt(msg, 16); err != nil {
		return err
	}
	root, err := msg.deref(0)
	if err != nil {
		return err
	}
	if err := msg.tables(root, 4, msg.keyValue); err != nil {
		return err
	}
	h, err := msg.table(root, 2)
	if err != nil {
		return err
	}
	if h < 0 {
		return fmt.Errorf("no schema")
	}
	return msg.schema(h)
}
