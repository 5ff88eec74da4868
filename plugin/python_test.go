package plugin

import (
	"context"
	"errors"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"

	"gridstage/models"
	"gridstage/solver"
)

// pythonScript returns the Python stage's path, skipping when Debian's
// grpcio is missing outside CI (CI=true fails instead: .ci/run installs it).
func pythonScript(t *testing.T) string {
	t.Helper()
	if err := exec.Command("/usr/bin/python3", "-c", "import grpc, google.protobuf").Run(); err != nil {
		if os.Getenv("CI") == "true" {
			t.Fatalf("python3-grpcio/python3-protobuf missing in CI: %v", err)
		}
		t.Skip("/usr/bin/python3 cannot import grpc and google.protobuf (apt-get install python3-grpcio python3-protobuf)")
	}
	p, err := filepath.Abs(filepath.Join("..", "stages", "python", "burnside_stage.py"))
	if err != nil {
		t.Fatal(err)
	}
	return p
}

func TestPythonStage(t *testing.T) {
	script := pythonScript(t)
	p, s, err := Launch(context.Background(), []string{"/usr/bin/python3", script}, LaunchOptions{Name: "py"})
	if err != nil {
		t.Fatal(err)
	}
	pid := p.cmd.Process.Pid
	ctx := context.Background()
	d, err := s.Describe(ctx)
	if err != nil || d.Name != "gridstage-python-burnside" || !d.Can(CapChainInline) || d.ProtocolVersions[0] != ProtocolVersion {
		t.Fatalf("Describe = %+v, %v", d, err)
	}
	if err := s.Health(ctx); err != nil {
		t.Fatal(err)
	}
	if _, err := s.Discretize(ctx, DiscretizeRequest{JobSpec: []byte("{}")}); !errors.Is(err, ErrUnsupported) {
		t.Errorf("Discretize: err = %v, want ErrUnsupported", err)
	}

	c, err := solver.AR1{Mean: 0.0179, Rho: -0.139, Sigma: 0.0348}.Discretize(solver.Settings{States: 7})
	if err != nil {
		t.Fatal(err)
	}
	data := &ChainData{Dim: 1, Grid: c.Grid, Transition: c.Transition, Matched: c.Matched}
	ref := ChainRef{ChainHash: DataHash(data), Process: "dividends"}
	req := EstimateRequest{Model: "burnside", Params: map[string]float64{"beta": 0.95, "theta": -1.5}, Chains: []ChainInput{{Ref: ref, Data: data}}}
	es, err := s.Estimate(ctx, req)
	if err != nil {
		t.Fatal(err)
	}
	want, err := models.Burnside{Beta: 0.95, Theta: -1.5}.PriceDividend(models.Chain{Levels: c.Grid, Transition: c.Transition})
	if err != nil {
		t.Fatal(err)
	}
	got := es[0].Vectors["price_dividend"]
	if len(got) != len(want) || es[0].ChainHashes[0] != ref.ChainHash {
		t.Fatalf("estimate %+v", es[0])
	}
	for i := range want {
		// Same linear system, Gaussian elimination in Python against LU in
		// Go: equal to rounding, 1e-12 relative (condition number ~20).
		if math.Abs(got[i]/want[i]-1) > 1e-12 {
			t.Errorf("state %d: python %.15g, go %.15g", i, got[i], want[i])
		}
	}

	// The Python stage recomputes the chain hash: a changed number is caught.
	bad := *data
	bad.Transition = append([]float64(nil), data.Transition...)
	bad.Transition[0] += 1e-9
	bad.Transition[1] -= 1e-9
	req.Chains[0].Data = &bad
	_, err = s.Estimate(ctx, req)
	if !errors.Is(err, ErrBadRequest) || !strings.Contains(err.Error(), "chain hash of the inline chain is") {
		t.Errorf("tampered chain: err = %v", err)
	}
	req.Model = "lucas"
	if _, err := s.Estimate(ctx, req); !errors.Is(err, ErrBadRequest) || !strings.Contains(err.Error(), `unknown model "lucas"`) {
		t.Errorf("unknown model: err = %v", err)
	}

	p.Close()
	if alive(pid) {
		t.Errorf("python stage %d still running after Close", pid)
	}
}

func TestPythonStageVersionMismatch(t *testing.T) {
	script := pythonScript(t)
	// Run as a host offering only version 7 would: the stage must refuse
	// and name both sides' versions in the line the host reads back.
	cmd := exec.Command("/usr/bin/python3", script)
	cmd.Env = append(os.Environ(), Handshake.MagicCookieKey+"="+Handshake.MagicCookieValue, "PLUGIN_PROTOCOL_VERSIONS=7")
	out, err := cmd.CombinedOutput()
	var ee *exec.ExitError
	if !errors.As(err, &ee) || ee.ExitCode() != 1 {
		t.Fatalf("exit: %v; output %s", err, out)
	}
	line := strings.TrimSpace(string(out))
	if line != mismatchMarker+" stage=1 host=7" {
		t.Fatalf("stderr %q", line)
	}
	p := &Process{name: "py", tail: &tailBuffer{max: 4}}
	p.tail.Write(out)
	if err := p.parseMarker(strings.TrimPrefix(line, mismatchMarker)); err.Error() != "stage py speaks stage protocol version 1 but the host speaks version 7" {
		t.Errorf("host message %q", err)
	}
}
