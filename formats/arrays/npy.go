package arrays

import (
	"archive/zip"
	"bytes"
	"encoding/binary"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"time"
	"unicode/utf8"
)

// npyMagic opens every .npy file, followed by the format version 1.0
// (NEP 1: "\x93NUMPY", major 1, minor 0).
const npyMagic = "\x93NUMPY\x01\x00"

// npyAlign is the alignment of the data after the header. NEP 1 asks for
// 16; NumPy itself pads to 64, which readers accept as well.
const npyAlign = 64

// appendNpy appends a's .npy encoding to b: the magic string and version,
// the header length as uint16 little-endian, a Python dict literal with the
// dtype, the order and the shape, padded with spaces to a multiple of
// npyAlign and ended by a newline, then the elements in C order.
func appendNpy(b []byte, a *Array) []byte {
	a.check()
	var descr string
	width := 0
	switch {
	case a.Float != nil:
		descr = "<f8"
	case a.Int != nil:
		descr = "<i4"
	default:
		for _, s := range a.Text {
			width = max(width, utf8.RuneCountInString(s))
		}
		width = max(width, 1)
		descr = "<U" + strconv.Itoa(width)
	}
	dims := make([]string, len(a.Shape))
	for i, d := range a.Shape {
		dims[i] = strconv.Itoa(d)
	}
	shape := "(" + strings.Join(dims, ", ")
	if len(dims) == 1 {
		shape += ","
	}
	shape += ")"
	header := fmt.Sprintf("{'descr': '%s', 'fortran_order': False, 'shape': %s, }", descr, shape)
	total := len(npyMagic) + 2 + len(header) + 1
	pad := (npyAlign - total%npyAlign) % npyAlign
	header += strings.Repeat(" ", pad) + "\n"
	b = append(b, npyMagic...)
	b = binary.LittleEndian.AppendUint16(b, uint16(len(header)))
	b = append(b, header...)
	switch {
	case a.Float != nil:
		for _, v := range a.Float {
			b = binary.LittleEndian.AppendUint64(b, math.Float64bits(v))
		}
	case a.Int != nil:
		for _, v := range a.Int {
			b = binary.LittleEndian.AppendUint32(b, uint32(v))
		}
	default:
		// UTF-32 little-endian, each element padded with NUL code points.
		for _, s := range a.Text {
			n := 0
			for _, r := range s {
				b = binary.LittleEndian.AppendUint32(b, uint32(r))
				n++
			}
			for ; n < width; n++ {
				b = binary.LittleEndian.AppendUint32(b, 0)
			}
		}
	}
	return b
}

// entryTime is the modification time of every ZIP entry: 1 January 1980,
// the earliest the MS-DOS date fields can carry, so archives do not
// depend on the clock.
var entryTime = time.Date(1980, 1, 1, 0, 0, 0, 0, time.UTC)

// WriteNpz writes the arrays as a .npz archive, as numpy.savez would: a
// ZIP archive with one stored (uncompressed) member <name>.npy per array,
// in the order given. numpy.load reads it without pickling.
func WriteNpz(w io.Writer, arrays []Array) error {
	z := zip.NewWriter(w)
	var buf []byte
	for i := range arrays {
		buf = appendNpy(buf[:0], &arrays[i])
		f, err := z.CreateHeader(&zip.FileHeader{Name: arrays[i].Name + ".npy", Method: zip.Store, Modified: entryTime})
		if err != nil {
			return err
		}
		if _, err := io.Copy(f, bytes.NewReader(buf)); err != nil {
			return err
		}
	}
	return z.Close()
}
