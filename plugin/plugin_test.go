package plugin

import (
	"bytes"
	"context"
	"errors"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"sync"
	"syscall"
	"testing"
	"time"

	goplugin "github.com/hashicorp/go-plugin"
)

// echoStage is an in-process stage that answers from its inputs.
type echoStage struct{}

func (echoStage) Describe(context.Context) (Description, error) {
	return Description{Name: "echo", Version: "1.2.3", ProtocolVersions: ProtocolVersions,
		Capabilities: []string{CapDiscretize, CapEstimate, CapArrowStream}, Models: []string{"mass"}}, nil
}

func (echoStage) Health(context.Context) error { return nil }

// bigArrow is larger than two Arrow chunks, to exercise chunking.
var bigArrow = bytes.Repeat([]byte("0123456789abcdef"), (2*arrowChunkSize+100)/16)

func (echoStage) Discretize(_ context.Context, r DiscretizeRequest) (*Discretization, error) {
	if r.JobSpec == nil && r.Manifest == nil {
		return nil, BadRequest("nothing to do")
	}
	d := &Discretization{Chains: []ChainRef{
		{Path: filepath.Join(r.OutDir, "a.points.parquet"), Process: "a", Point: 0, ChainHash: "h0", SpecHash: "s0", ManifestHash: "m", FileHash: "f", Params: map[string]float64{"rho": 0.9}},
		{Path: filepath.Join(r.OutDir, "a.points.parquet"), Process: "a", Point: 1, ChainHash: "h1", SpecHash: "s1", ManifestHash: "m", FileHash: "f"},
	}}
	if r.StreamArrow {
		d.Arrow = map[string][]byte{"h0": bigArrow, "h1": []byte("small")}
	}
	return d, nil
}

func (echoStage) Estimate(_ context.Context, r EstimateRequest) ([]Estimate, error) {
	if r.Model != "mass" {
		return nil, BadRequest("unknown model %q", r.Model)
	}
	var out []Estimate
	for _, c := range r.Chains {
		var s float64
		for _, p := range c.Data.Transition {
			s += p
		}
		out = append(out, Estimate{Model: r.Model, ChainHashes: []string{c.Ref.ChainHash},
			Scalars: map[string]float64{"mass": s * r.Params["k"]},
			Vectors: map[string][]float64{"grid": c.Data.Grid}})
	}
	return out, nil
}

func TestProtocolInProcess(t *testing.T) {
	client, _ := goplugin.TestPluginGRPCConn(t, false, map[string]goplugin.Plugin{PluginName: &GRPCPlugin{Impl: echoStage{}}})
	defer client.Close()
	raw, err := client.Dispense(PluginName)
	if err != nil {
		t.Fatal(err)
	}
	s := raw.(Stage)
	ctx := context.Background()

	d, err := s.Describe(ctx)
	if err != nil || d.Name != "echo" || d.Version != "1.2.3" || !d.Can(CapArrowStream) || d.ProtocolVersions[0] != ProtocolVersion {
		t.Fatalf("Describe = %+v, %v", d, err)
	}
	if err := s.Health(ctx); err != nil {
		t.Fatal(err)
	}

	disc, err := s.Discretize(ctx, DiscretizeRequest{Manifest: []byte("run: x"), OutDir: "/o", StreamArrow: true})
	if err != nil {
		t.Fatal(err)
	}
	if len(disc.Chains) != 2 || disc.Chains[0].Params["rho"] != 0.9 || disc.Chains[1].Point != 1 || disc.Chains[0].Path != "/o/a.points.parquet" {
		t.Fatalf("chains %+v", disc.Chains)
	}
	if !bytes.Equal(disc.Arrow["h0"], bigArrow) || string(disc.Arrow["h1"]) != "small" {
		t.Fatalf("arrow payload lengths %d, %d; want %d, 5", len(disc.Arrow["h0"]), len(disc.Arrow["h1"]), len(bigArrow))
	}
	if _, err := s.Discretize(ctx, DiscretizeRequest{}); err == nil {
		t.Error("empty request accepted")
	}

	data := &ChainData{Dim: 1, Grid: []float64{-1, 1}, Transition: []float64{0.25, 0.75, 0.5, 0.5}, Matched: []int{2, 2}}
	es, err := s.Estimate(ctx, EstimateRequest{Model: "mass", Params: map[string]float64{"k": 3}, Chains: []ChainInput{{Ref: ChainRef{ChainHash: "h0"}, Data: data}}})
	if err != nil {
		t.Fatal(err)
	}
	// Two rows summing to one, times k = 3: exactly 6 in binary arithmetic.
	if len(es) != 1 || es[0].Scalars["mass"] != 6 || es[0].ChainHashes[0] != "h0" || es[0].Vectors["grid"][1] != 1 {
		t.Fatalf("Estimate = %+v", es)
	}
	_, err = s.Estimate(ctx, EstimateRequest{Model: "nope"})
	if !errors.Is(err, ErrBadRequest) || !strings.Contains(err.Error(), `unknown model "nope"`) {
		t.Errorf("bad model: err = %v, want ErrBadRequest naming the model", err)
	}
}

// faultStageDir is the temporary folder of built binaries, removed by TestMain.
var faultStageDir string

// buildFaultStage compiles testdata/faultstage once per test binary.
var buildFaultStage = sync.OnceValues(func() (string, error) {
	dir, err := os.MkdirTemp("", "faultstage")
	if err != nil {
		return "", err
	}
	faultStageDir = dir
	bin := filepath.Join(dir, "faultstage")
	out, err := exec.Command("go", "build", "-o", bin, "./testdata/faultstage").CombinedOutput()
	if err != nil {
		return "", errors.New(string(out))
	}
	return bin, nil
})

func faultStage(t *testing.T) string {
	t.Helper()
	if testing.Short() {
		t.Skip("builds a stage binary")
	}
	bin, err := buildFaultStage()
	if err != nil {
		t.Fatalf("building faultstage: %v", err)
	}
	return bin
}

func TestMain(m *testing.M) {
	code := m.Run()
	if faultStageDir != "" {
		os.RemoveAll(faultStageDir)
	}
	os.Exit(code)
}

func launchFault(t *testing.T, mode string, opt LaunchOptions) (*Process, Stage, error) {
	t.Helper()
	opt.Env = append(opt.Env, "FAULT_MODE="+mode)
	return Launch(context.Background(), []string{faultStage(t)}, opt)
}

// alive reports whether a process with this pid exists and is not a zombie.
func alive(pid int) bool {
	b, err := os.ReadFile("/proc/" + strconv.Itoa(pid) + "/stat")
	if err != nil {
		return false
	}
	// The state follows the command name in parentheses: "pid (comm) S ...".
	s := string(b)
	i := strings.LastIndexByte(s, ')')
	return i < 0 || i+2 >= len(s) || s[i+2] != 'Z'
}

func TestProtocolSubprocess(t *testing.T) {
	p, s, err := launchFault(t, "", LaunchOptions{})
	if err != nil {
		t.Fatal(err)
	}
	pid := p.cmd.Process.Pid
	ctx := context.Background()
	d, err := s.Describe(ctx)
	if err != nil || d.Name != "faultstage" {
		t.Fatalf("Describe = %+v, %v", d, err)
	}
	if err := s.Health(ctx); err != nil {
		t.Fatal(err)
	}
	data := &ChainData{Dim: 1, Grid: []float64{0, 1}, Transition: []float64{0.5, 0.5, 0.125, 0.875}}
	es, err := s.Estimate(ctx, EstimateRequest{Model: "sum", Params: map[string]float64{"scale": 2.5},
		Chains: []ChainInput{{Ref: ChainRef{ChainHash: "abc"}, Data: data}}})
	if err != nil {
		t.Fatal(err)
	}
	// 0.5 + 0.5 + 0.125 + 0.875 = 2 exactly in binary.
	if len(es) != 1 || es[0].Scalars["sum"] != 2 || es[0].Scalars["scale"] != 2.5 || es[0].ChainHashes[0] != "abc" {
		t.Fatalf("Estimate = %+v", es)
	}
	_, err = s.Discretize(ctx, DiscretizeRequest{JobSpec: []byte("{}")})
	if !errors.Is(err, ErrUnsupported) {
		t.Errorf("Discretize on an estimate-only stage: err = %v, want ErrUnsupported", err)
	}
	p.Close()
	if alive(pid) {
		t.Errorf("stage pid %d still running after Close", pid)
	}
	if _, err := os.Stat(p.sockets); !os.IsNotExist(err) {
		t.Errorf("socket folder %s left behind: %v", p.sockets, err)
	}
}

func TestFaultCrash(t *testing.T) {
	p, s, err := launchFault(t, "crash", LaunchOptions{Name: "crashy"})
	if err != nil {
		t.Fatal(err)
	}
	defer p.Close()
	_, err = s.Estimate(context.Background(), EstimateRequest{Model: "sum"})
	err = p.Explain("Estimate", err)
	msg := err.Error()
	for _, want := range []string{"stage crashy crashed during Estimate", "exit status 2", "deliberate crash"} {
		if !strings.Contains(msg, want) {
			t.Errorf("error %q lacks %q", msg, want)
		}
	}
}

func TestFaultHangTimesOutAndLeavesNoOrphans(t *testing.T) {
	pidFile := filepath.Join(t.TempDir(), "child.pid")
	p, s, err := launchFault(t, "spawn-hang", LaunchOptions{Name: "sleepy", Env: []string{"FAULT_PIDFILE=" + pidFile}})
	if err != nil {
		t.Fatal(err)
	}
	stagePid := p.cmd.Process.Pid
	ctx, cancel := context.WithTimeout(context.Background(), 500*time.Millisecond)
	defer cancel()
	start := time.Now()
	_, err = s.Estimate(ctx, EstimateRequest{Model: "sum"})
	waited := time.Since(start)
	err = p.Explain("Estimate", err)
	if !errors.Is(err, context.DeadlineExceeded) || !strings.Contains(err.Error(), "stage sleepy did not answer Estimate within the timeout") {
		t.Fatalf("err = %v, want a timeout naming the stage", err)
	}
	// Not a timing assertion on speed, only that the timeout was honoured
	// rather than waiting for the stage (which never answers).
	if waited > time.Minute {
		t.Fatalf("the call returned after %v", waited)
	}
	b, err := os.ReadFile(pidFile)
	if err != nil {
		t.Fatal(err)
	}
	child, _ := strconv.Atoi(string(b))
	if !alive(child) {
		t.Fatalf("the stage's child %d is not running before Close", child)
	}
	p.Close()
	for _, pid := range []int{stagePid, child} {
		// The child is re-parented to init when the stage dies; give init
		// a moment to reap it.
		deadline := time.Now().Add(5 * time.Second)
		for alive(pid) && time.Now().Before(deadline) {
			time.Sleep(20 * time.Millisecond)
		}
		if alive(pid) {
			t.Errorf("pid %d still running after Close", pid)
			_ = syscall.Kill(pid, syscall.SIGKILL)
		}
	}
}

func TestFaultHandshake(t *testing.T) {
	cases := []struct {
		mode  string
		opt   LaunchOptions
		wants []string
	}{
		{"exit-early", LaunchOptions{}, []string{"exited before completing the handshake", "exit status 3", "giving up before the handshake"}},
		{"slow-start", LaunchOptions{StartTimeout: 300 * time.Millisecond}, []string{"did not complete the handshake within the start timeout"}},
		{"garbage", LaunchOptions{}, []string{`printed "hello, this is not a handshake" instead of a handshake line`}},
		{"version-2", LaunchOptions{}, []string{"speaks stage protocol version 2 but the host speaks version 1"}},
		{"hang-describe", LaunchOptions{StartTimeout: 500 * time.Millisecond}, []string{"did not answer Describe within the timeout"}},
	}
	for _, tc := range cases {
		t.Run(tc.mode, func(t *testing.T) {
			tc.opt.Name = "fs-" + tc.mode
			p, _, err := launchFault(t, tc.mode, tc.opt)
			if err == nil {
				p.Close()
				t.Fatal("launch succeeded")
			}
			for _, w := range append(tc.wants, "stage fs-"+tc.mode) {
				if !strings.Contains(err.Error(), w) {
					t.Errorf("error %q lacks %q", err, w)
				}
			}
		})
	}
}

func TestMismatchErrorFromGoPluginMessage(t *testing.T) {
	// A stage that does not pre-check (any non-Go stage) answers the
	// handshake with its own version; go-plugin then reports this message,
	// which the host turns into a MismatchError.
	p := &Process{name: "py", client: goplugin.NewClient(&goplugin.ClientConfig{HandshakeConfig: Handshake, Cmd: exec.Command("true")}), tail: &tailBuffer{max: 4}}
	err := p.handshakeError(errors.New("incompatible API version with plugin. Plugin version: 7, Client versions: [1]"))
	var me *MismatchError
	if !errors.As(err, &me) || me.StageVersions[0] != 7 || me.HostVersions[0] != 1 {
		t.Fatalf("err = %#v", err)
	}
	if want := "stage py speaks stage protocol version 7 but the host speaks version 1"; err.Error() != want {
		t.Errorf("message %q, want %q", err, want)
	}
}

func TestServeByHand(t *testing.T) {
	t.Setenv(Handshake.MagicCookieKey, "")
	if err := Serve(echoStage{}); !errors.Is(err, ErrNotLaunched) {
		t.Errorf("err = %v, want ErrNotLaunched", err)
	}
}

var _ = math.NaN
