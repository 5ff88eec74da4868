package manifests

import (
	"encoding/csv"
	"errors"
	"io"
	"os"
	"path/filepath"
	"strconv"
	"strings"

	"go.yaml.in/yaml/v3"
)

// maxDrawBytes bounds the size of a draw table.
const maxDrawBytes = 64 << 20

// drawTable is a table of parameter draws: one sweep point per row, one
// parameter per column (columns listed under ignore are skipped).
type drawTable struct {
	file    string // as written in the manifest
	columns []string
	rows    [][]num // parallel to columns; nil once compacted
	// values holds the rows' values, row after row, once the table is
	// compacted: every point has been checked with the full cells (their
	// text and position, for messages), and rebuilding a point later needs
	// only the values (8 bytes a cell instead of about 80).
	values []float64
	n      int // rows
}

// numRows returns the number of draws.
func (t *drawTable) numRows() int {
	if t.rows == nil {
		return t.n
	}
	return len(t.rows)
}

// cell returns column c of row r.
func (t *drawTable) cell(r, c int) num {
	if t.rows == nil {
		return num{v: t.values[r*len(t.columns)+c], set: true, at: loc{pos: Pos{File: t.file, Line: r + 2}}}
	}
	return t.rows[r][c]
}

// compact keeps only the values of the cells.
func (t *drawTable) compact() {
	if t.rows == nil {
		return
	}
	t.n = len(t.rows)
	t.values = make([]float64, 0, t.n*len(t.columns))
	for _, row := range t.rows {
		for _, x := range row {
			t.values = append(t.values, x.v)
		}
	}
	t.rows = nil
}

const drawsWant = "a file name (.csv or .parquet) or a mapping {file, ignore}"

// decodeDraws reads the draws entry and the table it names. names are the
// process's sweepable parameters.
func (d *decoder) decodeDraws(n *yaml.Node, path string, names []string) *drawTable {
	n = resolve(n)
	var file str
	var ignore []string
	switch {
	case n.Kind == yaml.ScalarNode && n.Tag == "!!str":
		file = str{v: n.Value, at: d.at(n, path), set: true}
	case n.Kind == yaml.MappingNode:
		m := d.mapping(n, path, drawsWant)
		file = m.text("file", "a file name")
		if !file.set {
			if !file.bad {
				m.missing("file", "a file name (.csv or .parquet)")
			}
			m.get("ignore")
			m.finish(nil)
			return nil
		}
		if list, ok := m.list("ignore", "a list of column names"); ok {
			for i, item := range list.Content {
				item = resolve(item)
				if item.Kind != yaml.ScalarNode || item.Tag != "!!str" {
					d.r.add(d.at(item, joinIndex(m.field("ignore"), i)), ErrType, "the value is %s: want a column name", describe(item))
					continue
				}
				ignore = append(ignore, item.Value)
			}
		}
		m.finish(nil)
	default:
		d.r.add(d.at(n, path), ErrType, "the value is %s: want %s", describe(n), drawsWant)
		return nil
	}
	if file.v == "" {
		d.r.add(file.at, ErrRange, "the file name is empty: want a .csv or .parquet file")
		return nil
	}
	full := file.v
	if !filepath.IsAbs(full) && d.dir != "" {
		full = filepath.Join(d.dir, full)
	}
	t := &drawTable{file: file.v}
	var ok bool
	switch strings.ToLower(filepath.Ext(full)) {
	case ".csv":
		ok = d.readCSV(t, full, file.at, path, names, ignore)
	case ".parquet":
		ok = d.readParquet(t, full, file.at, path, names, ignore)
	default:
		d.r.add(file.at, ErrRange, "%q is neither a .csv nor a .parquet file", file.v)
		return nil
	}
	if !ok {
		return nil
	}
	return t
}

// openTable opens a draw table, refusing anything but a regular file of
// reasonable size (a device or pipe could block or never end).
func (d *decoder) openTable(full string, at loc) (*os.File, bool) {
	info, err := os.Stat(full)
	if err != nil {
		d.r.add(at, ErrFile, "cannot read the draw table: %s", pathErr(err))
		return nil, false
	}
	if !info.Mode().IsRegular() {
		d.r.add(at, ErrFile, "%s is not a regular file: want a CSV or Parquet table", full)
		return nil, false
	}
	if info.Size() > maxDrawBytes {
		d.r.add(at, ErrFile, "%s is %d bytes: want at most %d", full, info.Size(), maxDrawBytes)
		return nil, false
	}
	f, err := os.Open(full)
	if err != nil {
		d.r.add(at, ErrFile, "cannot read the draw table: %s", pathErr(err))
		return nil, false
	}
	return f, true
}

// pathErr shortens an *os.PathError to "path: reason".
func pathErr(err error) string {
	var pe *os.PathError
	if errors.As(err, &pe) {
		return pe.Path + ": " + pe.Err.Error()
	}
	return err.Error()
}

// header checks the column names; it returns, per column, whether the
// column is used (false: ignored) and whether all names are valid.
func (d *decoder) header(t *drawTable, cols []string, at func(i int) loc, atFile loc, names, ignore []string) ([]bool, bool) {
	use := make([]bool, len(cols))
	ok := true
	seen := map[string]int{}
	for i, c := range cols {
		if j, dup := seen[c]; dup {
			if isColumnName(c) {
				d.r.add(at(i), ErrDuplicate, "column %q repeats column %d", c, j+1)
			} else {
				d.r.add(at(i), ErrDuplicate, "column %d repeats the header of column %d", i+1, j+1)
			}
			ok = false
			continue
		}
		seen[c] = i
		switch {
		case contains(ignore, c):
		case contains(names, c):
			use[i] = true
			t.columns = append(t.columns, c)
		default:
			if !isColumnName(c) {
				// Not a name a table of draws would carry: say so without
				// repeating it (the "table" may be a link to another file).
				d.r.add(at(i), ErrUnknown, "column %d of %s has a header that is not a parameter name (not shown: want letters, digits, _ . - only): is it a draw table?", i+1, t.file)
			} else {
				d.r.add(at(i), ErrUnknown, "column %q is not a parameter of this process: %s (or list it under ignore)", c, hint(c, names))
			}
			ok = false
		}
	}
	for _, g := range ignore {
		if _, found := seen[g]; !found {
			d.r.add(atFile, ErrUnknown, "ignore names column %q, which %s does not have", g, t.file)
			ok = false
		}
	}
	if ok && len(t.columns) == 0 {
		d.r.add(atFile, ErrMissing, "%s has no parameter columns: want at least one", t.file)
		ok = false
	}
	return use, ok
}

// readCSV reads a CSV draw table with a header row. Positions in errors
// are the table's own lines and columns.
func (d *decoder) readCSV(t *drawTable, full string, at loc, path string, names, ignore []string) bool {
	f, ok := d.openTable(full, at)
	if !ok {
		return false
	}
	defer f.Close()
	cr := csv.NewReader(io.LimitReader(f, maxDrawBytes))
	cr.TrimLeadingSpace = true
	cellAt := func(field int) loc {
		line, col := cr.FieldPos(field)
		return loc{pos: Pos{File: full, Line: line, Column: col}}
	}
	csvErr := func(err error) {
		var pe *csv.ParseError
		if errors.As(err, &pe) {
			d.r.add(loc{pos: Pos{File: full, Line: pe.Line, Column: pe.Column}, path: path}, ErrSyntax, "%s", pe.Err)
			return
		}
		d.r.add(at, ErrFile, "cannot read the draw table: %s", pathErr(err))
	}
	head, err := cr.Read()
	if err == io.EOF {
		d.r.add(at, ErrMissing, "%s is empty: want a header row naming parameters, then one row per draw", t.file)
		return false
	}
	if err != nil {
		csvErr(err)
		return false
	}
	cols := make([]string, len(head))
	for i, c := range head {
		cols[i] = strings.TrimSpace(strings.TrimPrefix(c, "\ufeff"))
	}
	use, ok := d.header(t, cols, func(i int) loc {
		l := cellAt(i)
		l.path = path
		return l
	}, at, names, ignore)
	if !ok {
		return false
	}
	// One path string per column, shared by every row's cells.
	cellPaths := make([]string, len(cols))
	for i := range cols {
		if use[i] {
			cellPaths[i] = joinKey(path, cols[i])
		}
	}
	badRows := 0
	for {
		rec, err := cr.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			csvErr(err)
			return false
		}
		if len(t.rows) >= maxJobs {
			d.r.add(at, ErrRange, "%s has more than %d rows: want at most %d draws", t.file, maxJobs, maxJobs)
			return false
		}
		row := make([]num, 0, len(t.columns))
		good := true
		for i, cell := range rec {
			if !use[i] {
				continue
			}
			l := cellAt(i)
			l.path = cellPaths[i]
			text := strings.TrimSpace(cell)
			if p := rangeProblem(text); p != "" {
				d.r.add(l, ErrRange, "%s %s", text, p)
				good = false
				continue
			}
			v, err := strconv.ParseFloat(text, 64)
			if err != nil {
				d.r.add(l, ErrType, "%q is not a number: want a number in column %s", text, cols[i])
				good = false
				continue
			}
			row = append(row, num{v: v, text: text, at: l, set: true})
		}
		if !good {
			badRows++
			continue
		}
		t.rows = append(t.rows, row)
	}
	if len(t.rows) == 0 && badRows == 0 {
		d.r.add(at, ErrMissing, "%s has a header but no rows: want one row per draw", t.file)
	}
	return len(t.rows) > 0 && badRows == 0
}

// isColumnName reports whether a header cell looks like a parameter name
// (at most 64 letters, digits, '_', '.', '-' or '[],' as in coef[1,2]),
// and so may be repeated in a message.
func isColumnName(c string) bool {
	if c == "" || len(c) > 64 {
		return false
	}
	for _, r := range c {
		if !(r >= 'a' && r <= 'z' || r >= 'A' && r <= 'Z' || r >= '0' && r <= '9' || strings.ContainsRune("_.-[],", r)) {
			return false
		}
	}
	return true
}
