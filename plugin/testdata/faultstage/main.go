// Command faultstage is a stage for the plugin tests that misbehaves on
// request: FAULT_MODE selects the fault.
//
//	(empty)        a working stage: Estimate sums each chain's transition matrix
//	crash          panics inside Estimate
//	hang           never answers Estimate (ignores its context)
//	spawn-hang     starts a child process (its pid written to FAULT_PIDFILE), then hangs in Estimate
//	exit-early     exits with status 3 before the handshake
//	slow-start     sleeps an hour before the handshake
//	garbage        prints a line that is not a handshake
//	version-2      speaks only stage protocol version 2
//	bad-request    rejects Estimate as a bad request
//	hang-describe  never answers Describe
package main

import (
	"context"
	"fmt"
	"os"
	"os/exec"
	"strconv"
	"time"

	"gridstage/plugin"
)

type stage struct{ mode string }

func (s stage) Describe(context.Context) (plugin.Description, error) {
	if s.mode == "hang-describe" {
		select {}
	}
	return plugin.Description{Name: "faultstage", Version: "0.0.1", ProtocolVersions: plugin.ProtocolVersions,
		Capabilities: []string{plugin.CapEstimate}, Models: []string{"sum"}}, nil
}

func (s stage) Health(context.Context) error { return nil }

func (s stage) Discretize(context.Context, plugin.DiscretizeRequest) (*plugin.Discretization, error) {
	return nil, plugin.ErrUnsupported
}

func (s stage) Estimate(ctx context.Context, req plugin.EstimateRequest) ([]plugin.Estimate, error) {
	switch s.mode {
	case "crash":
		panic("faultstage: deliberate crash in Estimate")
	case "hang":
		select {}
	case "spawn-hang":
		child := exec.Command("sleep", "3600")
		if err := child.Start(); err != nil {
			return nil, err
		}
		if err := os.WriteFile(os.Getenv("FAULT_PIDFILE"), []byte(strconv.Itoa(child.Process.Pid)), 0o644); err != nil {
			return nil, err
		}
		select {}
	case "bad-request":
		return nil, plugin.BadRequest("model %q needs parameter beta", req.Model)
	}
	var out []plugin.Estimate
	for _, c := range req.Chains {
		var sum float64
		if c.Data != nil {
			for _, p := range c.Data.Transition {
				sum += p
			}
		}
		out = append(out, plugin.Estimate{Model: req.Model, ChainHashes: []string{c.Ref.ChainHash},
			Scalars: map[string]float64{"sum": sum, "scale": req.Params["scale"]}})
	}
	return out, nil
}

func main() {
	mode := os.Getenv("FAULT_MODE")
	versions := plugin.ProtocolVersions
	switch mode {
	case "exit-early":
		fmt.Fprintln(os.Stderr, "faultstage: giving up before the handshake")
		os.Exit(3)
	case "slow-start":
		time.Sleep(time.Hour)
	case "garbage":
		fmt.Println("hello, this is not a handshake")
		time.Sleep(time.Hour)
	case "version-2":
		versions = []int{2}
	}
	if err := plugin.ServeVersions(stage{mode: mode}, versions); err != nil {
		fmt.Fprintln(os.Stderr, "faultstage:", err)
		os.Exit(1)
	}
}
