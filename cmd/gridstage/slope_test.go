package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestPipelineSlopeExample runs examples/pipeline/slope.yaml: the model
// stage asks for sensitivities (stage protocol minor 1) and prints the
// chain's d(price-dividend ratio)/d(rho) beside the closed form's. The
// closed form's derivative is itself checked against mpmath
// (models.TestBurnsideClosedFormDerivative); here the two must agree to
// 1e-6 relative, the discretization error of these 31-state chains
// (measured 2.5e-9 at rho 0.5 and 1.1e-8 at rho 0.9).
func TestPipelineSlopeExample(t *testing.T) {
	bin := stageBinaries(t)
	dir := t.TempDir()
	src := filepath.Join("..", "..", "examples", "pipeline")
	manifest, err := os.ReadFile(filepath.Join(src, "orchard.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	pipe, err := os.ReadFile(filepath.Join(src, "slope.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	text := strings.Replace(string(pipe), "[../../bin/modelstage]", "["+filepath.Join(bin, "modelstage")+"]", 1)
	text = strings.Replace(text, "out: out/tessaly-slope", "out: out", 1)
	os.WriteFile(filepath.Join(dir, "orchard.yaml"), manifest, 0o644)
	os.WriteFile(filepath.Join(dir, "slope.yaml"), []byte(text), 0o644)
	code, out, errOut := gridstageCmd(bin, "pipeline", filepath.Join(dir, "slope.yaml"), "--json", "--output-root", dir)
	if code != 0 {
		t.Fatalf("pipeline exit %d: %s", code, errOut)
	}
	var res pipelineResult
	if err := json.Unmarshal([]byte(out), &res); err != nil {
		t.Fatal(err)
	}
	if len(res.Estimates) != 2 {
		t.Fatalf("%d estimates, want 2", len(res.Estimates))
	}
	for _, e := range res.Estimates {
		got, want := e.Scalars["d_price_dividend_d_rho"], e.Scalars["closed_form_d_price_dividend_d_rho"]
		if !(want > 0) || e.Scalars["relative_difference"] > 1e-6 {
			t.Errorf("estimate %s: chain dv/drho %.10g, closed form %.10g", e.ID, got, want)
		}
	}
}
