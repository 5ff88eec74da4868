package docblock

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// ReadFile returns the text of file, a path relative to the module root.
func ReadFile(t testing.TB, file string) string {
	t.Helper()
	b, err := os.ReadFile(filepath.Join(Root(t), filepath.FromSlash(file)))
	if err != nil {
		t.Fatal(err)
	}
	return string(b)
}

// Section returns the Markdown section of file that starts with the line
// heading (such as "### Ledger"), up to the next heading of the same or a
// higher level.
func Section(t testing.TB, file, heading string) string {
	t.Helper()
	level := len(heading) - len(strings.TrimLeft(heading, "#"))
	if level == 0 {
		t.Fatalf("docblock: %q is not a Markdown heading", heading)
	}
	lines := strings.Split(ReadFile(t, file), "\n")
	var out []string
	in, fenced := false, false
	for _, l := range lines {
		if strings.HasPrefix(l, "```") {
			fenced = !fenced
		}
		if in && !fenced {
			if h := len(l) - len(strings.TrimLeft(l, "#")); h > 0 && h <= level && strings.HasPrefix(l[h:], " ") {
				break
			}
		}
		if l == heading {
			in = true
		}
		if in {
			out = append(out, l)
		}
	}
	if !in {
		t.Fatalf("%s has no heading %q", file, heading)
	}
	return strings.Join(out, "\n")
}

// Tables returns the Markdown tables of the section of file that starts
// with heading, in order: each a list of body rows (header and separator
// left out), each row a list of trimmed cells, `\|` read as a literal bar.
// Tests use it to check a documented layout (columns, keys) against the
// code.
func Tables(t testing.TB, file, heading string) [][][]string {
	t.Helper()
	var (
		tables [][][]string
		rows   [][]string
		header bool
	)
	for _, l := range strings.Split(Section(t, file, heading)+"\n", "\n") {
		if !strings.HasPrefix(l, "|") {
			if header {
				tables = append(tables, rows)
			}
			rows, header = nil, false
			continue
		}
		if !header { // the header row
			header = true
			continue
		}
		cells := strings.Split(strings.Trim(strings.ReplaceAll(l, `\|`, "\x00"), "|"), "|")
		if strings.Trim(cells[0], " -:") == "" {
			continue // the separator row
		}
		for i, c := range cells {
			cells[i] = strings.TrimSpace(strings.ReplaceAll(c, "\x00", "|"))
		}
		rows = append(rows, cells)
	}
	return tables
}
