package main

import (
	"io/fs"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
)

// TestArchitecturePageMatchesTree checks docs/ARCHITECTURE.md against the
// tree: every top-level folder and every folder holding Go code is listed,
// and every folder the page lists exists.
func TestArchitecturePageMatchesTree(t *testing.T) {
	root := filepath.Join("..", "..")
	page, err := os.ReadFile(filepath.Join(root, "docs", "ARCHITECTURE.md"))
	if err != nil {
		t.Fatal(err)
	}
	text := string(page)
	want := map[string]bool{}
	top, err := os.ReadDir(root)
	if err != nil {
		t.Fatal(err)
	}
	for _, e := range top {
		if e.IsDir() && !strings.HasPrefix(e.Name(), ".") {
			want[e.Name()+"/"] = true
		}
	}
	err = filepath.WalkDir(root, func(path string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		name := d.Name()
		if d.IsDir() && path != root && (strings.HasPrefix(name, ".") || name == "testdata" || name == "node_modules") {
			return filepath.SkipDir
		}
		if !d.IsDir() && strings.HasSuffix(name, ".go") {
			rel, _ := filepath.Rel(root, filepath.Dir(path))
			want[filepath.ToSlash(rel)+"/"] = true
		}
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	for dir := range want {
		if !strings.Contains(text, "`"+dir+"`") {
			t.Errorf("docs/ARCHITECTURE.md does not list the folder %s", dir)
		}
	}
	rows := regexp.MustCompile("(?m)^\\| `([a-z0-9_./-]+/)` \\|")
	for _, m := range rows.FindAllStringSubmatch(text, -1) {
		if st, err := os.Stat(filepath.Join(root, m[1])); err != nil || !st.IsDir() {
			t.Errorf("docs/ARCHITECTURE.md lists %s, which is not a folder of the tree", m[1])
		}
	}
}
