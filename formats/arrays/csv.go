package arrays

import (
	"bufio"
	"bytes"
	"fmt"
	"io"
	"math"
	"os"
	"strconv"
	"strings"
)

// wideCSV writes one CSV table whose rows end in a run of values of
// varying length (a transition row has one value per state, and the number
// of states may change across sweep points). Rows go to a scratch file as
// they come; finish writes the header, named keys then <prefix>0 … for the
// widest row, and copies the rows, padding shorter ones with empty fields
// (which CSV readers such as DuckDB read as null).
type wideCSV struct {
	path    string
	keys    []string
	prefix  string
	scratch *os.File
	buf     *bufio.Writer
	widest  int
	row     []byte
}

// newWideCSV starts the table that finish will write to path, with its
// scratch file in folder scratch.
func newWideCSV(path, scratch string, keys []string, prefix string) (*wideCSV, error) {
	f, err := os.CreateTemp(scratch, ".rows-*")
	if err != nil {
		return nil, err
	}
	return &wideCSV{path: path, keys: keys, prefix: prefix, scratch: f, buf: bufio.NewWriterSize(f, 1<<16)}, nil
}

// cell renders a number exactly: the shortest decimal that reads back as
// the same float64 (strconv's 'g' with precision −1). A number with no
// finite value (a null of the tables, see docs/FORMATS.md) is an empty
// field, never "NaN" or "+Inf".
func cell(v float64) string {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return ""
	}
	return strconv.FormatFloat(v, 'g', -1, 64)
}

// add writes one row: the key fields, then the values (an empty string is
// an empty field). No field may hold a comma, a quote or a newline: every
// field is a number, a hash or a plain name.
func (w *wideCSV) add(keys []string, values []string) error {
	w.row = w.row[:0]
	for i, k := range keys {
		if i > 0 {
			w.row = append(w.row, ',')
		}
		w.row = append(w.row, k...)
	}
	for _, v := range values {
		w.row = append(w.row, ',')
		w.row = append(w.row, v...)
	}
	w.row = append(w.row, '\n')
	w.widest = max(w.widest, len(values))
	_, err := w.buf.Write(w.row)
	return err
}

// finish writes the table to out.
func (w *wideCSV) finish(out io.Writer) error {
	if err := w.buf.Flush(); err != nil {
		return err
	}
	if _, err := w.scratch.Seek(0, io.SeekStart); err != nil {
		return err
	}
	bw := bufio.NewWriterSize(out, 1<<16)
	header := append([]string(nil), w.keys...)
	if w.prefix != "" {
		for k := 0; k < w.widest; k++ {
			header = append(header, w.prefix+strconv.Itoa(k))
		}
	}
	bw.WriteString(strings.Join(header, ",") + "\n")
	fields := len(header)
	sc := bufio.NewScanner(w.scratch)
	sc.Buffer(make([]byte, 1<<20), 1<<30)
	for sc.Scan() {
		line := sc.Bytes()
		bw.Write(line)
		for n := bytes.Count(line, []byte{','}) + 1; n < fields; n++ {
			bw.WriteByte(',')
		}
		bw.WriteByte('\n')
	}
	if err := sc.Err(); err != nil {
		return fmt.Errorf("arrays: reading back %s: %w", w.path, err)
	}
	return bw.Flush()
}

// close removes the scratch file.
func (w *wideCSV) close() {
	w.scratch.Close()
	os.Remove(w.scratch.Name())
}
