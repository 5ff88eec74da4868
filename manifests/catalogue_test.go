package manifests

import (
	"errors"
	"flag"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

var update = flag.Bool("update", false, "rewrite the .want files of the malformed-manifest catalogue and the examples of docs/HASHES.md")

// badManifests lists the malformed manifests under testdata/manifests/bad
// (each with a .want file holding its exact error output) and the sentinel
// every case must carry.
var badManifests = []struct {
	file string
	kind error
}{
	{"rho-out-of-range.yaml", ErrRange},
	{"unknown-key-typo.yaml", ErrUnknown},
	{"sigma-not-positive.yaml", ErrRange},
	{"states-too-few.yaml", ErrRange},
	{"states-fraction.yaml", ErrRange},
	{"states-text.yaml", ErrType},
	{"states-auto-tauchen.yaml", ErrRule},
	{"states-cap-without-auto.yaml", ErrRule},
	{"rho-quoted.yaml", ErrType},
	{"moments-too-many.yaml", ErrRange},
	{"moments-with-tauchen.yaml", ErrRule},
	{"nodes-with-rouwenhorst.yaml", ErrRule},
	{"floden-with-maxent.yaml", ErrRule},
	{"matching-with-tauchen.yaml", ErrRule},
	{"adda-cooper-fat-tails.yaml", ErrRule},
	{"width-with-hermite.yaml", ErrRule},
	{"t-nu-too-small.yaml", ErrRange},
	{"t-nu-four-moments.yaml", ErrRule},
	{"mixture-weights-sum.yaml", ErrRule},
	{"mixture-bad-component.yaml", ErrRange},
	{"duplicate-name.yaml", ErrDuplicate},
	{"duplicate-key.yaml", ErrDuplicate},
	{"unknown-kind.yaml", ErrUnknown},
	{"unknown-method.yaml", ErrUnknown},
	{"key-of-other-kind.yaml", ErrUnknown},
	{"missing-top-level.yaml", ErrMissing},
	{"bad-format.yaml", ErrUnknown},
	{"bad-names.yaml", ErrRange},
	{"syntax-error.yaml", ErrSyntax},
	{"empty.yaml", ErrMissing},
	{"two-documents.yaml", ErrSyntax},
	{"iid-with-tauchen.yaml", ErrRule},
	{"iid-compare.yaml", ErrRule},
	{"iid-missing-distribution.yaml", ErrMissing},
	{"iid-law-parameter.yaml", ErrUnknown},
	{"iid-hermite-bounded.yaml", ErrRule},
	{"sweep-unknown-parameter.yaml", ErrUnknown},
	{"sweep-value-out-of-range.yaml", ErrRange},
	{"sweep-range-step-and-count.yaml", ErrRule},
	{"sweep-too-many-points.yaml", ErrRange},
	{"sweep-empty.yaml", ErrMissing},
	{"draws-bad-cells.yaml", ErrType},
	{"draws-out-of-range.yaml", ErrRange},
	{"draws-unknown-column.yaml", ErrUnknown},
	{"draws-missing-file.yaml", ErrFile},
	{"manifest-errors.json", ErrType},
	{"wrong-shapes.yaml", ErrType},
	{"var-not-stationary.yaml", ErrRange},
	{"var-cov-not-positive-definite.yaml", ErrRange},
	{"var-cov-asymmetric.yaml", ErrRule},
	{"var-ragged-matrix.yaml", ErrType},
	{"var-mismatched-sizes.yaml", ErrRule},
	{"var-settings.yaml", ErrRange},
	{"ar1-volatility-log-variance.yaml", ErrMissing},
	{"lifecycle-lengths.yaml", ErrRule},
	{"lifecycle-innovations.yaml", ErrRule},
	{"product-components.yaml", ErrRule},
	{"lifecycle-product.yaml", ErrRule},
	{"product-too-many-states.yaml", ErrRange},
	{"former-names.yaml", ErrUnknown},
}

// toRoot runs the test from the repository root, so that file names in
// messages read as a user at the root would see them.
func toRoot(t *testing.T) {
	t.Helper()
	t.Chdir("..")
}

// TestBadManifests checks that every malformed manifest in the catalogue
// fails with exactly the errors in its .want file, that every error names a
// file, line and column, and that the list carries the expected sentinel.
func TestBadManifests(t *testing.T) {
	toRoot(t)
	dir := filepath.Join("testdata", "manifests", "bad")
	listed := map[string]bool{}
	for _, tc := range badManifests {
		listed[tc.file] = true
		t.Run(tc.file, func(t *testing.T) {
			path := filepath.Join(dir, tc.file)
			_, err := Load(path)
			if err == nil {
				t.Fatalf("Load(%s) succeeded; want an error", path)
			}
			var list ErrorList
			if !errors.As(err, &list) {
				t.Fatalf("error is %T, want ErrorList", err)
			}
			for _, e := range list {
				if e.Pos.File == "" || e.Pos.Line < 1 || e.Pos.Column < 1 {
					t.Errorf("error without file:line:column: %q", e)
				}
			}
			if !errors.Is(err, tc.kind) {
				t.Errorf("errors.Is(err, %v) = false for:\n%v", tc.kind, err)
			}
			wantFile := path + ".want"
			got := err.Error() + "\n"
			if *update {
				if err := os.WriteFile(wantFile, []byte(got), 0o644); err != nil {
					t.Fatal(err)
				}
				return
			}
			want, rerr := os.ReadFile(wantFile)
			if rerr != nil {
				t.Fatalf("missing %s (run go test ./manifests -run TestBadManifests -update and review it)", wantFile)
			}
			if got != string(want) {
				t.Errorf("errors differ from %s\ngot:\n%swant:\n%s", wantFile, got, want)
			}
		})
	}
	// Every manifest in the folder must be in the table.
	entries, err := os.ReadDir(dir)
	if err != nil {
		t.Fatal(err)
	}
	n := 0
	for _, e := range entries {
		name := e.Name()
		if ext := filepath.Ext(name); ext != ".yaml" && ext != ".json" {
			continue
		}
		n++
		if !listed[name] {
			t.Errorf("%s is not in badManifests", name)
		}
	}
	if n < 22 {
		t.Errorf("the catalogue has %d malformed manifests, want at least 22", n)
	}
}

// TestErrorText checks the message layout on the example the design names:
// file:line:column: field path: what is wrong: what was expected.
func TestErrorText(t *testing.T) {
	src := "run: wages\nprocesses:\n  - name: earnings\n    kind: ar1\n    rho: 1.2\n    sigma: 0.15\n"
	_, err := Parse(strings.NewReader(src), "examples/wages.yaml", "")
	want := "examples/wages.yaml:5:10: processes[0].rho: 1.2 is out of range: want a number in (-1, 1)"
	if err == nil || err.Error() != want {
		t.Fatalf("got %v\nwant %s", err, want)
	}
	var e *Error
	if !errors.As(err, &e) || e.Field != "processes[0].rho" || e.Pos.Line != 5 || e.Pos.Column != 10 {
		t.Fatalf("errors.As gave %+v", e)
	}
}

// TestErrorsCollected checks that problems in different places are all
// reported, in document order, not just the first.
func TestErrorsCollected(t *testing.T) {
	src := `run: x
processes:
  - {name: a, kind: ar1, rho: 2, sigma: 0.1}
  - {name: b, kind: ar1, rho: 0.5, sigma: 0}
  - {name: c, kind: ar1, rho: 0.5, sigma: 0.1, states: 0}
`
	_, err := Parse(strings.NewReader(src), "m.yaml", "")
	var list ErrorList
	if !errors.As(err, &list) || len(list) != 3 {
		t.Fatalf("want 3 errors, got %v", err)
	}
	for i, field := range []string{"processes[0].rho", "processes[1].sigma", "processes[2].states"} {
		if list[i].Field != field {
			t.Errorf("error %d is about %s, want %s", i, list[i].Field, field)
		}
	}
}

// TestErrorCap checks that a sweep with a bad value at every point reports
// a bounded list with a count of the rest.
func TestErrorCap(t *testing.T) {
	src := "run: x\nprocesses:\n  - name: a\n    kind: ar1\n    rho: 0.5\n    sweep:\n      vary:\n        sigma: {from: -1000, to: 0, count: 1000}\n"
	_, err := Parse(strings.NewReader(src), "m.yaml", "")
	var list ErrorList
	if !errors.As(err, &list) {
		t.Fatalf("want an ErrorList, got %v", err)
	}
	if len(list) != maxErrors+1 || !strings.Contains(list[maxErrors].Msg, "950 more errors") {
		t.Fatalf("got %d errors, last %q", len(list), list[len(list)-1])
	}
}
