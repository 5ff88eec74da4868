package plugin

import (
	"context"
	"errors"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
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

// The gridstage_stage module turns plain functions into a stage: it checks
// the parameters against the function's signature, reports BadRequest as
// the host's input error, and refuses non-finite results and failures of
// the function with a message the host can show.
func TestPythonModule(t *testing.T) {
	script := pythonScript(t)
	user := filepath.Join(t.TempDir(), "user_stage.py")
	os.WriteFile(user, []byte(`import sys
sys.path.insert(0, `+strconv.Quote(filepath.Dir(script))+`)
from gridstage_stage import serve, BadRequest

def mean(chain, scale, shift=0.0):
    if scale == 0:
        raise BadRequest("scale must not be zero")
    if scale < 0:
        return {"bad": float("nan")}
    if scale > 100:
        return {"ratio": 1 / 0}
    return {"mean": scale * float(chain.stationary @ chain.levels) + shift, "levels": chain.levels}

serve("user-means", "1.0", {"means": mean})
`), 0o644)
	p, s, err := Launch(context.Background(), []string{"/usr/bin/python3", user}, LaunchOptions{Name: "user"})
	if err != nil {
		t.Fatal(err)
	}
	defer p.Close()
	ctx := context.Background()
	if d, err := s.Describe(ctx); err != nil || d.Name != "user-means" || d.Version != "1.0" || len(d.Models) != 1 || d.Models[0] != "means" {
		t.Fatalf("Describe = %+v, %v", d, err)
	}
	c, err := solver.AR1{Mean: 1, Rho: 0.5, Sigma: 0.2}.Discretize(solver.Settings{States: 5})
	if err != nil {
		t.Fatal(err)
	}
	data := &ChainData{Dim: 1, Grid: c.Grid, Transition: c.Transition, Matched: c.Matched}
	in := []ChainInput{{Ref: ChainRef{ChainHash: DataHash(data)}, Data: data}}
	ask := func(params map[string]float64) ([]Estimate, error) {
		return s.Estimate(ctx, EstimateRequest{Model: "means", Params: params, Chains: in})
	}
	es, err := ask(map[string]float64{"scale": 2})
	if err != nil {
		t.Fatal(err)
	}
	// The stationary mean of a maxent chain equals the process mean 1
	// (means matched in every state): 2·1 + 0, to 1e-12 (rounding in a
	// least-squares solve of a 6×5 system).
	if len(es) != 1 || math.Abs(es[0].Scalars["mean"]-2) > 1e-12 || len(es[0].Vectors["levels"]) != 5 || es[0].ChainHashes[0] != in[0].Ref.ChainHash {
		t.Errorf("estimates %+v", es)
	}
	for _, tc := range []struct {
		params map[string]float64
		bad    bool
		want   string
	}{
		{map[string]float64{}, true, "model means needs parameter scale"},
		{map[string]float64{"scale": 1, "tilt": 2}, true, "model means does not take parameter tilt (it takes scale, shift)"},
		{map[string]float64{"scale": 0}, true, "scale must not be zero"},
		{map[string]float64{"scale": -1}, false, "returned a non-finite bad on chain"},
		{map[string]float64{"scale": 1000}, false, "ZeroDivisionError"},
	} {
		_, err := ask(tc.params)
		if err == nil || errors.Is(err, ErrBadRequest) != tc.bad || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%v: err = %v, want %q (bad request %v)", tc.params, err, tc.want, tc.bad)
		}
	}
}
