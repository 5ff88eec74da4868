package fusecheck

import (
	"flag"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
)

var fix = flag.Bool("fix", false, "wrap every flagged product of the hash path in float64(...)")

// hashPath lists the packages whose arithmetic decides a chain's numbers
// (docs/HASHES.md, "Same numbers on every machine").
var hashPath = []string{"../../solver", "../../manifests", "../portablemath"}

// TestHashPathHasNoFusableProducts fails on any product in the packages of
// the hash path that an arm64 build may fuse with an addition. With -fix it
// wraps them instead (then gofmt).
func TestHashPathHasNoFusableProducts(t *testing.T) {
	for _, dir := range hashPath {
		findings, err := Dir(dir)
		if err != nil {
			t.Fatal(err)
		}
		var products []Finding
		for _, f := range findings {
			if f.Fixable() {
				products = append(products, f)
			} else {
				t.Error(f)
			}
		}
		if *fix && len(products) > 0 {
			changed, err := Fix(products)
			if err != nil {
				t.Fatal(err)
			}
			if out, err := exec.Command("gofmt", append([]string{"-w"}, changed...)...).CombinedOutput(); err != nil {
				t.Fatalf("gofmt: %v\n%s", err, out)
			}
			t.Logf("%s: wrapped %d products", dir, len(products))
			continue
		}
		for _, f := range products {
			t.Errorf("%s: write float64(...) around the product so that arm64 does not fuse it with an addition (docs/HASHES.md)", f)
		}
	}
	if t.Failed() {
		t.Log("to wrap them all: go test ./internal/fusecheck -run TestHashPathHasNoFusableProducts -fix")
	}
}

// TestFixture checks the checker on testdata/fixture: exactly the lines
// marked "want" are flagged, and after Fix nothing is.
func TestFixture(t *testing.T) {
	findings, err := Dir("testdata/fixture")
	if err != nil {
		t.Fatal(err)
	}
	src, err := os.ReadFile("testdata/fixture/fixture.go")
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(string(src), "\n")
	flagged := map[int]bool{}
	for _, f := range findings {
		flagged[f.Pos.Line] = true
	}
	for i, line := range lines {
		want := strings.HasSuffix(strings.TrimSpace(line), "// want")
		if want != flagged[i+1] {
			t.Errorf("fixture.go:%d: flagged %v, want %v: %s", i+1, flagged[i+1], want, strings.TrimSpace(line))
		}
	}

	// Fix a copy, then nothing is left to flag and the copy still builds.
	dir := t.TempDir()
	if err := os.WriteFile(filepath.Join(dir, "fixture.go"), src, 0o644); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(dir, "go.mod"), []byte("module fixture\n\ngo 1.26\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	copied, err := Dir(dir)
	if err != nil {
		t.Fatal(err)
	}
	if len(copied) != len(findings) {
		t.Fatalf("copy: %d findings, want %d", len(copied), len(findings))
	}
	var products []Finding
	for _, f := range copied {
		if f.Fixable() {
			products = append(products, f)
		}
	}
	if _, err := Fix(products); err != nil {
		t.Fatal(err)
	}
	after, err := Dir(dir)
	if err != nil {
		t.Fatal(err)
	}
	// Only the math call is left; Fix refuses it.
	if len(after) != 1 || after[0].Fixable() || !strings.Contains(after[0].String(), "math.Exp") {
		t.Errorf("after Fix: %v, want only the math.Exp call", after)
	}
	if _, err := Fix(after); err == nil {
		t.Error("Fix rewrote a math call")
	}
	fixed, _ := os.ReadFile(filepath.Join(dir, "fixture.go"))
	for _, want := range []string{"s := float64(a*b) + c", "s *= a", "s = float64(s * a)", "return float64(a * c), i"} {
		if want == "s *= a" {
			if strings.Contains(string(fixed), want) {
				t.Errorf("Fix left %q", want)
			}
			continue
		}
		if !strings.Contains(string(fixed), want) {
			t.Errorf("fixed source lacks %q:\n%s", want, fixed)
		}
	}
}

// TestImports: the hash path may import the standard library, this module
// and AllowedImports only; an import of any other library is flagged.
func TestImports(t *testing.T) {
	for path, want := range map[string]bool{
		"math": true, "sort": true, "gridstage/internal/portablemath": true,
		"gonum.org/v1/gonum/mat":         true, // AllowedImports
		"gonum.org/v1/gonum/stat/distuv": false,
		"gonum.org/v1/gonum/floats":      false,
		"github.com/example/fastmath":    false,
	} {
		if got := portableImport(path); got != want {
			t.Errorf("portableImport(%q) = %v, want %v", path, got, want)
		}
	}

	// Dir reports such an import where it stands.
	dir := t.TempDir()
	files := map[string]string{
		"go.mod":     "module lib.example/m\n\ngo 1.26\n",
		"lib/lib.go": "package lib\n\nfunc Twice(x float64) float64 { return x + x }\n",
		"use/use.go": "package use\n\nimport \"lib.example/m/lib\"\n\nfunc F(x float64) float64 { return lib.Twice(x) }\n",
	}
	for name, text := range files {
		if err := os.MkdirAll(filepath.Dir(filepath.Join(dir, name)), 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(filepath.Join(dir, name), []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	findings, err := Dir(filepath.Join(dir, "use"))
	if err != nil {
		t.Fatal(err)
	}
	if len(findings) != 1 || findings[0].Fixable() || findings[0].Pos.Line != 3 || !strings.Contains(findings[0].String(), "lib.example/m/lib") {
		t.Errorf("findings %v, want the import of lib.example/m/lib on line 3", findings)
	}
}
