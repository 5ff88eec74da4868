// Command fakestage is a stage for the pipeline tests. Its first argument
// picks the role and behaviour:
//
//	grid                  discretizes: returns three chain references (processes a, a, b)
//	estimate ok           one estimate per chain: scalar "n" = number of states
//	estimate crash        panics in Estimate
//	estimate hang         never answers Estimate
//	estimate nan          returns a NaN value
//	estimate stranger     names a chain it was not given
//	estimate inline       like ok, but asks for chains inline and checks they came
package main

import (
	"context"
	"fmt"
	"math"
	"os"
	"path/filepath"

	"gridstage/plugin"
)

type stage struct{ role, mode string }

func (s stage) Describe(context.Context) (plugin.Description, error) {
	d := plugin.Description{Name: "fake-" + s.role, Version: "9.9.9", ProtocolVersions: plugin.ProtocolVersions, Models: []string{"count"}}
	if s.role == "grid" {
		d.Capabilities = []string{plugin.CapDiscretize}
	} else {
		d.Capabilities = []string{plugin.CapEstimate}
		if s.mode == "inline" {
			d.Capabilities = append(d.Capabilities, plugin.CapChainInline)
		}
	}
	return d, nil
}

func (s stage) Health(context.Context) error { return nil }

func (s stage) Discretize(_ context.Context, r plugin.DiscretizeRequest) (*plugin.Discretization, error) {
	if s.role != "grid" {
		return nil, plugin.ErrUnsupported
	}
	if len(r.Manifest) == 0 {
		return nil, plugin.BadRequest("%s: empty manifest", r.SourceName)
	}
	path := filepath.Join(r.OutDir, "a.points.parquet")
	return &plugin.Discretization{Chains: []plugin.ChainRef{
		{Path: path, Process: "a", Point: 0, ChainHash: "aaaa0000aaaa0000", SpecHash: "s0", ManifestHash: "mh", FileHash: "fa"},
		{Path: path, Process: "a", Point: 1, ChainHash: "aaaa1111aaaa1111", SpecHash: "s1", ManifestHash: "mh", FileHash: "fa"},
		{Path: filepath.Join(r.OutDir, "b.points.parquet"), Process: "b", Point: 0, ChainHash: "bbbb0000bbbb0000", SpecHash: "s2", ManifestHash: "mh", FileHash: "fb"},
	}}, nil
}

func (s stage) Estimate(_ context.Context, r plugin.EstimateRequest) ([]plugin.Estimate, error) {
	switch s.mode {
	case "crash":
		panic("fakestage: crash on purpose")
	case "hang":
		select {}
	}
	var out []plugin.Estimate
	for _, c := range r.Chains {
		n := 0.0
		if c.Data != nil {
			n = float64(c.Data.States())
		} else if s.mode == "inline" {
			return nil, fmt.Errorf("chain %s came without data", c.Ref.ChainHash)
		}
		e := plugin.Estimate{Model: r.Model, ChainHashes: []string{c.Ref.ChainHash},
			Scalars: map[string]float64{"n": n, "k": r.Params["k"]}, Vectors: map[string][]float64{"point": {float64(c.Ref.Point)}}}
		switch s.mode {
		case "nan":
			e.Scalars["n"] = math.NaN()
		case "stranger":
			e.ChainHashes = []string{"ffffffffffffffff"}
		}
		out = append(out, e)
	}
	return out, nil
}

func main() {
	s := stage{role: os.Args[1]}
	if len(os.Args) > 2 {
		s.mode = os.Args[2]
	}
	if err := plugin.Serve(s); err != nil {
		fmt.Fprintln(os.Stderr, "fakestage:", err)
		os.Exit(1)
	}
}
