package manifests

import (
	"bytes"
	"errors"
	"os"
	"path/filepath"
	"testing"
)

// FuzzParse feeds arbitrary bytes to the parser. It must never panic; a
// failure must be an ErrorList whose errors name a file; a success must
// give jobs whose canonical specs parse back to themselves and build.
func FuzzParse(f *testing.F) {
	for _, dir := range []string{"../testdata/manifests/good", "../testdata/manifests/bad", "../examples"} {
		for _, pattern := range []string{"*.yaml", "*.json"} {
			files, _ := filepath.Glob(filepath.Join(dir, pattern))
			for _, file := range files {
				data, err := os.ReadFile(file)
				if err != nil {
					f.Fatal(err)
				}
				f.Add(data)
			}
		}
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		m, err := Parse(bytes.NewReader(data), "fuzz.yaml", "../testdata/manifests/good")
		if err != nil {
			var list ErrorList
			if !errors.As(err, &list) || len(list) == 0 {
				t.Fatalf("error %T %v is not a non-empty ErrorList", err, err)
			}
			for _, e := range list {
				if e.Pos.File == "" {
					t.Fatalf("error without a file: %v", e)
				}
			}
			return
		}
		if len(m.Jobs) > 200 {
			return // enough checked; keep each input fast
		}
		for _, j := range m.Jobs {
			back, err := ParseSpec(specOf(t, j))
			if err != nil {
				t.Fatalf("ParseSpec(%s): %v", specOf(t, j), err)
			}
			if back.SpecHash != j.SpecHash {
				t.Fatalf("spec %s does not round-trip: %s", specOf(t, j), specOf(t, back))
			}
			if _, err := j.Build(); err != nil {
				t.Fatal(err)
			}
		}
	})
}
