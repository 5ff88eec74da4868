package main

import (
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gridstage/internal/docblock"
)

// readmeFigure is the README's figure, and the sweep point of the bundled
// example it shows.
const (
	readmeFigure = "docs/img/moment-errors.png"
	readmePoint  = "rho=0.9,sigma=0.12"
)

// TestReadmeFigure draws the README's figure as a user would (run the
// bundled example, plot one sweep point) and checks it against the
// committed picture and the numbers beside it (docblock.CheckFigure), so
// a change of numbers or of the figure's drawing fails here rather than
// leaving the README showing a chain the tool no longer makes. -update
// rewrites the picture and its numbers; then reread the README's caption.
func TestReadmeFigure(t *testing.T) {
	out := filepath.Join(t.TempDir(), "wage-risk")
	if code, _, errOut := run(t, "run", "../../examples/wage-risk.yaml", "--out", out, "--cache", "off"); code != 0 {
		t.Fatalf("run: exit %d: %s", code, errOut)
	}
	figs := filepath.Join(t.TempDir(), "figs")
	code, stdout, errOut := run(t, "plot", out, "--where", readmePoint, "--out", figs)
	if code != 0 {
		t.Fatalf("plot: exit %d: %s", code, errOut)
	}
	var picture string
	for _, f := range strings.Fields(stdout) {
		if strings.HasSuffix(f, "-errors.png") {
			picture = f
		}
	}
	if picture == "" {
		t.Fatalf("plot wrote no error figure: %q", stdout)
	}
	png, err := os.ReadFile(picture)
	if err != nil {
		t.Fatal(err)
	}
	code, stdout, errOut = run(t, "inspect", out, "--process", "earnings", "--where", readmePoint, "--json")
	if code != 0 {
		t.Fatalf("inspect: exit %d: %s", code, errOut)
	}
	data := drawnErrors(t, stdout)
	docblock.CheckFigure(t, *updateDocOutputs, readmeFigure, png, data)

	// The README's caption says every state matched all four moments.
	readme, err := os.ReadFile(filepath.Join("..", "..", "README.md"))
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(string(readme), "matches all four moments in every state") {
		t.Fatal("the README's caption of the figure changed; update this check with it")
	}
	for _, line := range strings.Split(data, "\n")[1:] {
		if f := strings.Fields(line); len(f) > 2 && f[2] != "4" {
			t.Errorf("state %s matched %s moments, but the README's caption says every state matched four", f[0], f[2])
		}
	}
}

// drawnErrors is the text of the numbers the error figure draws: per
// state, its level, the moments it matched and the standardized error of
// each moment for the chain and its baseline, rounded to the decade the
// log-scale axis shows (errors below 1e-12 all sit on the floor of the
// plot, so they print as such).
func drawnErrors(t *testing.T, inspectJSON string) string {
	type state struct {
		Level    []float64          `json:"level"`
		Matched  int                `json:"matched"`
		StdError map[string]float64 `json:"std_error"`
	}
	var chain struct {
		Method   string                   `json:"method"`
		Diag     struct{ States []state } `json:"diagnostics"`
		Baseline struct {
			Method string  `json:"method"`
			States []state `json:"states"`
		} `json:"baseline_diagnostics"`
	}
	if err := json.Unmarshal([]byte(inspectJSON), &chain); err != nil {
		t.Fatal(err)
	}
	decade := func(x float64) string {
		if math.Abs(x) < 1e-12 {
			return "<1e-12"
		}
		return fmt.Sprintf("1e%+d", int(math.Round(math.Log10(math.Abs(x)))))
	}
	var b strings.Builder
	fmt.Fprintf(&b, "%s (%s), baseline %s: state, level, matched, |standardized error| of mean, variance, skewness, kurtosis (chain; baseline)\n",
		readmePoint, chain.Method, chain.Baseline.Method)
	for i, s := range chain.Diag.States {
		fmt.Fprintf(&b, "%2d %+.3f %d", i, s.Level[0], s.Matched)
		for _, m := range []string{"mean", "variance", "skewness", "kurtosis"} {
			base := "-"
			if i < len(chain.Baseline.States) {
				base = decade(chain.Baseline.States[i].StdError[m])
			}
			fmt.Fprintf(&b, " %s;%s", decade(s.StdError[m]), base)
		}
		b.WriteByte('\n')
	}
	return b.String()
}
