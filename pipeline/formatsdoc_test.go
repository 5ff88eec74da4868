package pipeline

import (
	"reflect"
	"strings"
	"testing"

	"gridstage/internal/docblock"
	"gridstage/plugin"
)

// TestFormatsDocEstimateFile checks the estimate-file layout of
// docs/FORMATS.md against the types the files are written from: every
// key, in order, and which keys are left out when empty; and the note on
// paths the files carry.
func TestFormatsDocEstimateFile(t *testing.T) {
	const doc, heading = "docs/FORMATS.md", "### Estimate files"
	tables := docblock.Tables(t, doc, heading)
	if len(tables) != 2 {
		t.Fatalf("%s, %q: %d tables, want the file's keys and a chain's", doc, heading, len(tables))
	}
	checkKeys(t, doc+", estimate file", tables[0], reflect.TypeFor[estimateFile]())
	checkKeys(t, doc+", estimate file chains", tables[1], reflect.TypeFor[plugin.ChainRef]())
	if !strings.Contains(docblock.Section(t, doc, heading), "`"+pathsNote+"`") {
		t.Errorf("%s does not quote the paths note %q", doc, pathsNote)
	}
}

// checkKeys compares a table of JSON keys (key, type, meaning) with the
// json tags of a struct: same keys in the same order, and "left out" in
// the meaning exactly where the tag has omitempty.
func checkKeys(t *testing.T, what string, rows [][]string, typ reflect.Type) {
	t.Helper()
	var keys []string
	omit := map[string]bool{}
	for i := range typ.NumField() {
		f := typ.Field(i)
		name, opts, _ := strings.Cut(f.Tag.Get("json"), ",")
		if name == "" || name == "-" {
			continue
		}
		keys = append(keys, name)
		omit[name] = strings.Contains(opts, "omitempty")
	}
	var docKeys []string
	for _, r := range rows {
		docKeys = append(docKeys, r[0])
		if len(r) == 3 && omit[r[0]] != strings.Contains(r[2], "left out") {
			t.Errorf("%s: key %s: the document says %q, the code omits it when empty: %v", what, r[0], r[2], omit[r[0]])
		}
	}
	if strings.Join(docKeys, " ") != strings.Join(keys, " ") {
		t.Errorf("%s: the document lists keys\n  %v\nthe code writes\n  %v", what, docKeys, keys)
	}
}
