package main

import (
	"flag"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
)

var updateDocOutputs = flag.Bool("update", false, "rewrite what the documents quote from the tool: the outputs in docs/ACCURACY.md, the README figure")

// shownCommand matches a fenced block that starts with a gridstage command
// line ("$ gridstage ...") followed by that command's output.
var shownCommand = regexp.MustCompile("(?s)```\n\\$ gridstage ([^\n]*)\n(.*?)```")

// TestDocumentedOutputs runs every command docs/ACCURACY.md shows with its
// output (the accuracy studies) and compares the output byte for byte, so a
// change of numbers (a new numerics version, a changed estimator) fails
// here instead of leaving the document stale. With -update the fenced
// outputs are rewritten in place; the prose around them that quotes
// numbers must then be reread by hand.
func TestDocumentedOutputs(t *testing.T) {
	path := filepath.Join("..", "..", "docs", "ACCURACY.md")
	doc, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	text := string(doc)
	blocks := shownCommand.FindAllStringSubmatchIndex(text, -1)
	if len(blocks) < 4 {
		t.Fatalf("found %d command blocks in %s, want the 4 accuracy studies", len(blocks), path)
	}
	var rewritten strings.Builder
	last := 0
	for _, b := range blocks {
		line := text[b[2]:b[3]]
		shown := text[b[4]:b[5]]
		code, out, errOut := run(t, strings.Fields(line)...)
		if code != 0 {
			t.Errorf("gridstage %s: exit %d: %s", line, code, errOut)
			continue
		}
		if out != shown && !*updateDocOutputs {
			t.Errorf("the output of `gridstage %s` differs from the one %s shows (rerun `go test ./cmd/gridstage -run '^TestDocumentedOutputs$' -update` and reread the prose around it):\n%s",
				line, path, firstLineDiff(shown, out))
		}
		rewritten.WriteString(text[last:b[4]])
		rewritten.WriteString(out)
		last = b[5]
	}
	rewritten.WriteString(text[last:])
	if *updateDocOutputs && rewritten.String() != text {
		if err := os.WriteFile(path, []byte(rewritten.String()), 0o644); err != nil {
			t.Fatal(err)
		}
	}
}

// firstLineDiff names the first line at which two texts differ.
func firstLineDiff(want, got string) string {
	w, g := strings.Split(want, "\n"), strings.Split(got, "\n")
	for i := 0; i < len(w) || i < len(g); i++ {
		var wl, gl string
		if i < len(w) {
			wl = w[i]
		}
		if i < len(g) {
			gl = g[i]
		}
		if wl != gl {
			return "line " + strconv.Itoa(i+1) + ":\n  document: " + wl + "\n  command:  " + gl
		}
	}
	return "(trailing difference)"
}
