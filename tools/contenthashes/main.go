// Command contenthashes verifies gridstage output folders and prints, for
// each file, its table, row count and recomputed content hash, one file a
// line sorted by name. Integration checks diff its output for two folders
// (a single-machine run and a merged cluster run) to show they hold the
// same numbers.
package main

import (
	"fmt"
	"os"
	"path/filepath"
	"sort"

	"gridstage/formats"
)

func main() {
	if len(os.Args) != 2 {
		fmt.Fprintln(os.Stderr, "usage: contenthashes DIR")
		os.Exit(2)
	}
	rep, err := formats.Verify(os.Args[1])
	if err != nil {
		fmt.Fprintln(os.Stderr, "contenthashes:", err)
		os.Exit(1)
	}
	files := rep.Files
	sort.Slice(files, func(i, j int) bool { return files[i].Path < files[j].Path })
	for _, f := range files {
		fmt.Printf("%s %s %d %s\n", filepath.Base(f.Path), f.Table, f.Rows, f.ContentHash)
	}
	if len(files) == 0 {
		fmt.Fprintln(os.Stderr, "contenthashes: no gridstage files in", os.Args[1])
		os.Exit(1)
	}
}
