package main

import (
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"

	"github.com/spf13/cobra"
)

// formerNames are spellings that gridstage replaced by names of its own
// (the node rules, the VAR's labels, the stochastic-volatility kind, and
// command-line flags that did not carry the manifest's names). None may
// appear in what a user reads: the help of every command, the JSON Schema,
// the README, docs/ and the bundled examples. Each pattern matches the old
// name as a whole word or as an option value, so that ordinary English
// ("an even number", "quantiles of the law") does not trip it.
var formerNames = []struct {
	what string
	re   *regexp.Regexp
}{
	{"flag --grid or --grid-axes", regexp.MustCompile(`--grid(-axes)?\b`)},
	{"key grid_axes", regexp.MustCompile(`\bgrid_axes\b`)},
	{"key grid with a node rule", regexp.MustCompile(`\bgrid\s*[:=]\s*"?(even|quantile|gauss-hermite|gauss-legendre)\b`)},
	{`rule value "even" or "quantile"`, regexp.MustCompile("[\"`'](even|quantile)[\"`']")},
	{"rule value even or quantile in a list of rules", regexp.MustCompile(`\b(even|quantile)\b[^.;\n]{0,40}gauss-(hermite|legendre)|gauss-(hermite|legendre)[^.;\n]{0,40}\b(even|quantile)\b`)},
	{"kind sv", regexp.MustCompile(`\bsv\b`)},
	{"label Psi or PSI", regexp.MustCompile(`\b(Psi|PSI)\d*\b`)},
	{"label B11 and the like", regexp.MustCompile(`\bB\d\d\b`)},
	{"flag of a law's parameter under a former name", regexp.MustCompile(`--(dist|mu|lo|hi|loc|mix-weights|mix-means|mix-sds)\b`)},
}

// checkFormerNames reports every former name in text, with its line.
func checkFormerNames(t *testing.T, where, text string) {
	t.Helper()
	for i, line := range strings.Split(text, "\n") {
		for _, f := range formerNames {
			if m := f.re.FindString(line); m != "" {
				t.Errorf("%s:%d: %s (%q) in %q", where, i+1, f.what, m, strings.TrimSpace(line))
			}
		}
	}
}

// TestFormerNamesPatterns checks that each pattern finds the old spelling
// and leaves the new one and ordinary words alone.
func TestFormerNamesPatterns(t *testing.T) {
	for _, old := range []string{"--grid even", "--grid-axes coordinate", "grid: quantile", "grid_axes: principal",
		`"even"`, "`quantile`", "even, gauss-hermite, gauss-legendre or quantile", "kind: sv", "Psi", "PSI", "Psi22", "B11",
		"--dist beta", "--mu 0", "--lo 0", "--hi 1", "--loc 0", "--mix-weights 0.5,0.5"} {
		hit := false
		for _, f := range formerNames {
			hit = hit || f.re.MatchString(old)
		}
		if !hit {
			t.Errorf("no pattern finds the former name in %q", old)
		}
	}
	for _, ok := range []string{"--nodes lattice", "nodes: equal-mass", "axes: principal", "kind: ar1-volatility",
		"coef[1,1]", "cov[2,2]", "an even number of states", "points at quantiles of the law", "evenly spaced",
		"--distribution beta", "--mean 0", "--lower 0", "--upper 1", "--location 0", "--component weight=1,mean=0,sd=1",
		"a grid stage: grid: {command: [...]}", "Calibration B (β = 0.95)"} {
		for _, f := range formerNames {
			if f.re.MatchString(ok) {
				t.Errorf("pattern %q (%s) matches the current spelling %q", f.re, f.what, ok)
			}
		}
	}
}

// TestNoFormerNames greps the help of every command, the JSON Schema, the
// README, docs/*.md and examples/ for the former names.
func TestNoFormerNames(t *testing.T) {
	var walk func(c *cobra.Command)
	walk = func(c *cobra.Command) {
		args := append(strings.Fields(c.CommandPath())[1:], "--help")
		code, out, errOut := run(t, args...)
		if code != 0 {
			t.Errorf("%s: exit %d: %s", strings.Join(args, " "), code, errOut)
		}
		checkFormerNames(t, "gridstage "+strings.Join(args, " "), out)
		for _, sub := range c.Commands() {
			if !sub.Hidden {
				walk(sub)
			}
		}
	}
	walk(newRoot())

	code, out, errOut := run(t, "schema")
	if code != 0 {
		t.Fatalf("schema: exit %d: %s", code, errOut)
	}
	checkFormerNames(t, "gridstage schema", out)

	root := filepath.Join("..", "..")
	files := []string{filepath.Join(root, "README.md")}
	for _, pattern := range []string{"docs/*.md", "examples/*.yaml", "examples/*/*.yaml"} {
		m, err := filepath.Glob(filepath.Join(root, pattern))
		if err != nil {
			t.Fatal(err)
		}
		files = append(files, m...)
	}
	if len(files) < 8 {
		t.Fatalf("found only %d documents to check: %v", len(files), files)
	}
	for _, f := range files {
		data, err := os.ReadFile(f)
		if err != nil {
			t.Fatal(err)
		}
		rel, _ := filepath.Rel(root, f)
		checkFormerNames(t, rel, string(data))
	}
}
