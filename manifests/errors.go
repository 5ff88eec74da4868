package manifests

import (
	"errors"
	"fmt"
	"sort"
	"strconv"
	"strings"
	"unicode/utf8"
)

// Sentinel errors classify each Error; test with errors.Is.
var (
	ErrSyntax    = errors.New("manifests: syntax error")
	ErrUnknown   = errors.New("manifests: unknown key or name")
	ErrType      = errors.New("manifests: wrong type")
	ErrMissing   = errors.New("manifests: missing value")
	ErrRange     = errors.New("manifests: value out of range")
	ErrRule      = errors.New("manifests: settings that do not go together")
	ErrDuplicate = errors.New("manifests: duplicate")
	ErrFile      = errors.New("manifests: unreadable file")
)

// Pos is a position in an input file. Line and Column count from 1 (Column
// counts bytes, as the YAML and CSV readers do). In a Parquet draw table
// the position is the one the table would have as CSV with a header line:
// data row k is line k+1, and Column is the column's index.
type Pos struct {
	File         string
	Line, Column int
}

func (p Pos) String() string {
	var b strings.Builder
	b.WriteString(p.File)
	if p.Line > 0 {
		b.WriteString(":" + strconv.Itoa(p.Line))
		if p.Column > 0 {
			b.WriteString(":" + strconv.Itoa(p.Column))
		}
	}
	return b.String()
}

// Error is one problem in a manifest: where it is, which field, and what was
// expected.
type Error struct {
	Pos   Pos
	Field string // path such as processes[0].rho; empty for the whole document
	Msg   string // what is wrong and what was expected
	Err   error  // one of the sentinel errors above
}

func (e *Error) Error() string {
	if e.Field == "" {
		return e.Pos.String() + ": " + e.Msg
	}
	return e.Pos.String() + ": " + e.Field + ": " + e.Msg
}

// Unwrap returns the sentinel that classifies the error.
func (e *Error) Unwrap() error { return e.Err }

// ErrorList holds every problem found in a manifest, in the order found.
type ErrorList []*Error

// Error lists the problems one per line.
func (l ErrorList) Error() string {
	lines := make([]string, len(l))
	for i, e := range l {
		lines[i] = e.Error()
	}
	return strings.Join(lines, "\n")
}

// Unwrap returns the individual errors, so errors.Is and errors.As see each.
func (l ErrorList) Unwrap() []error {
	out := make([]error, len(l))
	for i, e := range l {
		out[i] = e
	}
	return out
}

// maxErrors bounds the list: past it, one last error says how many more
// there were. A sweep of many points cannot flood the terminal.
const maxErrors = 50

// loc says where a value came from: a position and the field path there.
type loc struct {
	pos  Pos
	path string
}

// reporter collects errors, dropping exact repeats (a sweep may repeat the
// same problem at every point).
type reporter struct {
	errs    ErrorList
	seen    map[string]bool
	dropped int
}

func (r *reporter) add(at loc, kind error, format string, args ...any) {
	for i, a := range args {
		switch v := a.(type) {
		case string:
			args[i] = shorten(v, maxEcho)
		case fmt.Stringer:
			args[i] = shorten(v.String(), maxEcho)
		}
	}
	at.path = shorten(at.path, 2*maxEcho)
	e := &Error{Pos: at.pos, Field: at.path, Msg: fmt.Sprintf(format, args...), Err: kind}
	key := e.Error()
	if r.seen == nil {
		r.seen = map[string]bool{}
	}
	if r.seen[key] {
		return
	}
	r.seen[key] = true
	if len(r.errs) >= maxErrors {
		r.dropped++
		return
	}
	r.errs = append(r.errs, e)
}

// failed reports whether any error was recorded.
func (r *reporter) failed() bool { return len(r.errs) > 0 }

// count returns the number of errors recorded so far, dropped ones included.
func (r *reporter) count() int { return len(r.errs) + r.dropped }

// err returns the collected errors, or nil.
func (r *reporter) err() error {
	if len(r.errs) == 0 {
		return nil
	}
	// Report in reading order: files in the order they first appear, and
	// by line and column within each file.
	rank := map[string]int{}
	for _, e := range r.errs {
		if _, ok := rank[e.Pos.File]; !ok {
			rank[e.Pos.File] = len(rank)
		}
	}
	out := append(ErrorList(nil), r.errs...)
	sort.SliceStable(out, func(i, j int) bool {
		a, b := out[i].Pos, out[j].Pos
		if a.File != b.File {
			return rank[a.File] < rank[b.File]
		}
		if a.Line != b.Line {
			return a.Line < b.Line
		}
		return a.Column < b.Column
	})
	if r.dropped > 0 {
		last := out[len(out)-1]
		out = append(out, &Error{Pos: Pos{File: last.Pos.File}, Msg: fmt.Sprintf("%d more errors not shown", r.dropped), Err: last.Err})
	}
	return out
}

// maxEcho bounds how much of any one value an error message repeats (lists
// of allowed keys fit): a 5 MB
// cell or a 100 KB name is shown by its start and its length.
const maxEcho = 200

// shorten returns s cut to at most n bytes (at a UTF-8 boundary) with its
// full length noted, or s itself when it is short enough.
func shorten(s string, n int) string {
	if len(s) <= n {
		return s
	}
	cut := n
	for cut > 0 && !utf8.RuneStart(s[cut]) {
		cut--
	}
	return fmt.Sprintf("%s… (%d bytes in all)", s[:cut], len(s))
}
