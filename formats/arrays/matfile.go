package arrays

import (
	"encoding/binary"
	"io"
	"math"
	"strings"
	"unicode/utf8"
)

// Data types and array classes of MAT-file level 5 (MathWorks, "MAT-File
// Format", tables 1-2 and 1-3).
const (
	miINT8   = 1
	miINT32  = 5
	miUINT32 = 6
	miDOUBLE = 9
	miMATRIX = 14
	miUTF8   = 16

	mxCHAR   = 4
	mxDOUBLE = 6
	mxINT32  = 12
)

// matHeaderText is the descriptive text of the 128-byte header. It names
// no date, so files do not depend on the clock.
const matHeaderText = "MATLAB 5.0 MAT-file, written by gridstage (one sweep point of a Markov chain set)"

// WriteMat writes the arrays as a level 5 MAT-file, uncompressed, one
// variable per array in the order given: numbers as double or int32
// matrices, strings as char arrays (a list of strings as a char matrix,
// one row per string, padded with spaces). Shapes keep their order of
// dimensions; a one-dimensional array of n elements becomes an n×1
// column and a scalar a 1×1 matrix, as MATLAB has no fewer than two
// dimensions.
func WriteMat(w io.Writer, arrays []Array) error {
	b := make([]byte, 0, 4096)
	text := matHeaderText + strings.Repeat(" ", 116-len(matHeaderText))
	b = append(b, text...)
	b = append(b, make([]byte, 8)...)               // subsystem data offset: none
	b = binary.LittleEndian.AppendUint16(b, 0x0100) // version
	b = append(b, 'I', 'M')                         // endian indicator "MI" read as little-endian
	for i := range arrays {
		b = appendMatrix(b, &arrays[i])
	}
	_, err := w.Write(b)
	return err
}

// appendElement appends one data element: its 8-byte tag (type, byte
// count) and data padded with zeros to a multiple of 8 bytes.
func appendElement(b []byte, typ uint32, data []byte) []byte {
	b = binary.LittleEndian.AppendUint32(b, typ)
	b = binary.LittleEndian.AppendUint32(b, uint32(len(data)))
	b = append(b, data...)
	if r := len(data) % 8; r != 0 {
		b = append(b, make([]byte, 8-r)...)
	}
	return b
}

// appendMatrix appends a as one miMATRIX element: array flags, dimensions,
// name and real part.
func appendMatrix(b []byte, a *Array) []byte {
	a.check()
	var class uint32
	var dims []int
	var real []byte
	var realType uint32
	switch {
	case a.Text != nil:
		class, realType = mxCHAR, miUTF8
		dims, real = charMatrix(a)
	default:
		dims = append([]int(nil), a.Shape...)
		switch len(dims) {
		case 0:
			dims = []int{1, 1}
		case 1:
			dims = append(dims, 1)
		}
		order := columnMajor(a.Shape)
		if a.Float != nil {
			class, realType = mxDOUBLE, miDOUBLE
			for _, k := range order {
				real = binary.LittleEndian.AppendUint64(real, math.Float64bits(a.Float[k]))
			}
		} else {
			class, realType = mxINT32, miINT32
			for _, k := range order {
				real = binary.LittleEndian.AppendUint32(real, uint32(a.Int[k]))
			}
		}
	}
	var body []byte
	flags := binary.LittleEndian.AppendUint32(nil, class) // no complex, global or logical flag
	flags = binary.LittleEndian.AppendUint32(flags, 0)
	body = appendElement(body, miUINT32, flags)
	var dd []byte
	for _, d := range dims {
		dd = binary.LittleEndian.AppendUint32(dd, uint32(int32(d)))
	}
	body = appendElement(body, miINT32, dd)
	body = appendElement(body, miINT8, []byte(a.Name))
	body = appendElement(body, realType, real)
	return appendElement(b, miMATRIX, body)
}

// columnMajor returns, in MATLAB's column-major order of the elements of
// an array of the given row-major shape, each element's row-major index.
func columnMajor(shape []int) []int {
	n := 1
	for _, d := range shape {
		n *= d
	}
	out := make([]int, n)
	idx := make([]int, len(shape))
	stride := make([]int, len(shape))
	s := 1
	for k := len(shape) - 1; k >= 0; k-- {
		stride[k] = s
		s *= shape[k]
	}
	for c := 0; c < n; c++ {
		r := 0
		for k := range idx {
			r += idx[k] * stride[k]
		}
		out[c] = r
		// The first index runs fastest in column-major order.
		for k := 0; k < len(idx); k++ {
			idx[k]++
			if idx[k] < shape[k] {
				break
			}
			idx[k] = 0
		}
	}
	return out
}

// charMatrix lays out strings as a MATLAB char matrix: one row per string,
// padded with spaces to the longest, column-major, each character stored
// as UTF-8 (miUTF8, which scipy and Octave decode as Unicode; miUINT16
// would need the reader to be told the codec). A scalar string is a 1×len
// row; an empty list or empty string 0×0.
func charMatrix(a *Array) (dims []int, data []byte) {
	rows := make([][]rune, len(a.Text))
	width := 0
	for i, s := range a.Text {
		rows[i] = []rune(s)
		width = max(width, len(rows[i]))
	}
	if width == 0 || len(rows) == 0 {
		return []int{0, 0}, nil
	}
	for j := 0; j < width; j++ {
		for i := range rows {
			c := ' '
			if j < len(rows[i]) {
				c = rows[i][j]
			}
			data = utf8.AppendRune(data, c)
		}
	}
	return []int{len(rows), width}, data
}
