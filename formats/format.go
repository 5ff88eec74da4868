package formats

import (
	"fmt"
	"path/filepath"
	"strings"
)

// Format is an on-disk encoding.
type Format int

const (
	// Parquet is Apache Parquet with zstd-compressed pages (the default).
	Parquet Format = iota
	// Arrow is the Arrow IPC file format, uncompressed so that every Arrow
	// reader can open it.
	Arrow
)

// Ext returns the file extension of the format, with the dot.
func (f Format) Ext() string {
	if f == Arrow {
		return ".arrow"
	}
	return ".parquet"
}

func (f Format) String() string {
	if f == Arrow {
		return "arrow"
	}
	return "parquet"
}

// ParseFormat maps "parquet" or "arrow" to its Format.
func ParseFormat(s string) (Format, error) {
	switch s {
	case "parquet":
		return Parquet, nil
	case "arrow":
		return Arrow, nil
	}
	return 0, fmt.Errorf("formats: unknown format %q (want parquet or arrow)", s)
}

// Table names, in the order the tables are listed in docs/FORMATS.md.
const (
	TablePoints      = "points"
	TableTransitions = "transitions"
	TableBaseline    = "baseline"
	TableStates      = "states"
	TableDiagnostics = "diagnostics"
	TableSummary     = "summary"
	// TableSensitivities holds the chains' parameter derivatives; a set
	// has it only when its Header asks (Header.Sensitivities).
	TableSensitivities = "sensitivities"
)

// Tables lists every table every Set has. The points table is last because
// it is renamed into place last and records its siblings' content hashes.
var Tables = []string{TableTransitions, TableStates, TableDiagnostics, TableSummary, TableBaseline, TablePoints}

// tablesOf returns the tables of a set with header h, in writing order:
// Tables, with the sensitivities table before the points table when h
// asks for it.
func tablesOf(h Header) []string {
	if !h.Sensitivities {
		return Tables
	}
	n := len(Tables)
	out := append(append([]string(nil), Tables[:n-1]...), TableSensitivities)
	return append(out, Tables[n-1])
}

// knownTable reports whether name is a table some set may have.
func knownTable(name string) bool {
	for _, t := range Tables {
		if t == name {
			return true
		}
	}
	return name == TableSensitivities
}

// FileName returns the name of a set's table file: <process>.<table><ext>.
func FileName(process, table string, f Format) string {
	return process + "." + table + f.Ext()
}

// ParseFileName splits a gridstage file name into process, table and
// format; ok is false when the name does not follow the pattern.
func ParseFileName(path string) (process, table string, f Format, ok bool) {
	name := filepath.Base(path)
	switch {
	case strings.HasSuffix(name, ".parquet"):
		f = Parquet
	case strings.HasSuffix(name, ".arrow"):
		f = Arrow
	default:
		return "", "", 0, false
	}
	stem := strings.TrimSuffix(name, f.Ext())
	dot := strings.LastIndexByte(stem, '.')
	if dot <= 0 {
		return "", "", 0, false
	}
	process, table = stem[:dot], stem[dot+1:]
	if knownTable(table) && checkName(process) == nil {
		return process, table, f, true
	}
	return "", "", 0, false
}

// checkName reports whether a process name is safe as the first part of a
// file name: letters, digits, '_', '-' and '.', not starting with '.'.
func checkName(name string) error {
	if name == "" {
		return fmt.Errorf("formats: empty process name")
	}
	if name[0] == '.' {
		return fmt.Errorf("formats: process name %q starts with a dot", name)
	}
	for _, r := range name {
		ok := r == '_' || r == '-' || r == '.' || (r >= 'a' && r <= 'z') || (r >= 'A' && r <= 'Z') || (r >= '0' && r <= '9')
		if !ok {
			return fmt.Errorf("formats: process name %q has %q: want letters, digits, '_', '-' or '.'", name, r)
		}
	}
	return nil
}
