package main

import (
	"encoding/json"
	"fmt"
	"io"
	"text/tabwriter"

	"github.com/spf13/cobra"

	"gridstage/solver"
)

func newIIDCmd() *cobra.Command {
	var (
		ms    methodSettings
		shock shockFlags
	)
	cmd := &cobra.Command{
		Use:   "iid --dist NAME [parameters] --states N [flags]",
		Short: "A static distribution as weighted points with exactly matched moments",
		Long: `A static (i.i.d.) distribution as weighted points with exactly matched moments.

Distributions and their parameters:
  normal     --mu, --sigma         N(mu, sigma^2)
  lognormal  --mu, --sigma         exp(N(mu, sigma^2))
  beta       --alpha, --beta, --lo, --hi   Beta(alpha, beta) on [lo, hi]
  mixture    --mix-weights, --mix-means, --mix-sds   normal mixture
  t          --nu, --loc, --scale  loc + scale * t(nu)
  laplace    --loc, --scale        density exp(-|x-loc|/scale)/(2 scale)`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			if _, err := ms.settings(cmd); err != nil {
				return err
			}
			d, err := shock.distribution()
			if err != nil {
				return err
			}
			entry := ms.entry(cmd, map[string]any{"kind": "iid", "distribution": shock.distributionLaw()})
			sol, prov, err := solveEntry(entry)
			if err != nil {
				return err
			}
			c := sol.Chain
			out := &solver.Discrete{Nodes: c.Grid, Weights: c.Row(0), Moments: c.Moments, Matched: c.Matched[0]}
			return printIID(cmd.OutOrStdout(), shock.family, out, solver.IID{Dist: d}, prov, ms.json)
		},
	}
	fs := cmd.Flags()
	ms.register(cmd, false)
	shock.register(fs, "dist", "normal", "distribution: normal, lognormal, beta, mixture, t or laplace")
	fs.Float64Var(&shock.mu, "mu", 0, "normal: mean; lognormal: mean of the log")
	fs.Float64Var(&shock.sigma, "sigma", 1, "normal: s.d.; lognormal: s.d. of the log")
	fs.Float64Var(&shock.alpha, "alpha", 2, "beta: first shape parameter")
	fs.Float64Var(&shock.beta, "beta", 2, "beta: second shape parameter")
	fs.Float64Var(&shock.lo, "lo", 0, "beta: lower end of the support")
	fs.Float64Var(&shock.hi, "hi", 1, "beta: upper end of the support")
	fs.Float64Var(&shock.loc, "loc", 0, "t and laplace: location")
	fs.Float64Var(&shock.scale, "scale", 1, "t and laplace: scale")
	return cmd
}

// distribution validates the flags of the chosen family.
func (s *shockFlags) distribution() (solver.Distribution, error) {
	if err := choice("dist", s.family, []string{"normal", "lognormal", "beta", "mixture", "t", "laplace"}); err != nil {
		return nil, err
	}
	switch s.family {
	case "normal", "lognormal":
		if err := finite("mu", s.mu); err != nil {
			return nil, err
		}
		if err := positive("sigma", s.sigma); err != nil {
			return nil, err
		}
		if s.family == "normal" {
			return solver.Normal{Mu: s.mu, Sigma: s.sigma}, nil
		}
		return solver.LogNormal{Mu: s.mu, Sigma: s.sigma}, nil
	case "beta":
		for _, f := range []struct {
			name string
			v    float64
		}{{"alpha", s.alpha}, {"beta", s.beta}} {
			if err := positive(f.name, f.v); err != nil {
				return nil, err
			}
		}
		if err := finite("lo", s.lo); err != nil {
			return nil, err
		}
		if err := finite("hi", s.hi); err != nil {
			return nil, err
		}
		if !(s.hi > s.lo) {
			return nil, badInput("--hi %g is out of range: want a number above --lo %g", s.hi, s.lo)
		}
		return solver.Beta{Alpha: s.alpha, Beta: s.beta, Lo: s.lo, Hi: s.hi}, nil
	case "mixture":
		return s.mixture()
	case "t":
		if err := s.checkNu(2); err != nil {
			return nil, err
		}
		if err := finite("loc", s.loc); err != nil {
			return nil, err
		}
		if err := positive("scale", s.scale); err != nil {
			return nil, err
		}
		return solver.StudentT{Nu: s.nu, Loc: s.loc, Scale: s.scale}, nil
	default: // laplace
		if err := finite("loc", s.loc); err != nil {
			return nil, err
		}
		if err := positive("scale", s.scale); err != nil {
			return nil, err
		}
		return solver.Laplace{Loc: s.loc, Scale: s.scale}, nil
	}
}

type iidJSON struct {
	Kind        string      `json:"kind"`
	Dist        string      `json:"dist"`
	Grid        [][]float64 `json:"grid"`
	Weights     []float64   `json:"weights"`
	Moments     int         `json:"moments"`
	Diagnostics iidDiag     `json:"diagnostics"`
	provenance
}

type iidDiag struct {
	Matched  int            `json:"matched"`
	Discrete solver.Moments `json:"discrete"`
	True     solver.Moments `json:"true"`
}

func printIID(w io.Writer, family string, d *solver.Discrete, p solver.IID, prov provenance, asJSON bool) error {
	got := solver.WeightedMoments(d.Weights, d.Nodes)
	truth := p.Conditional(nil)
	if asJSON {
		grid := make([][]float64, len(d.Nodes))
		for i, x := range d.Nodes {
			grid[i] = []float64{x}
		}
		enc := json.NewEncoder(w)
		enc.SetIndent("", "  ")
		return enc.Encode(iidJSON{Kind: "iid", Dist: family, Grid: grid, Weights: d.Weights, Moments: d.Moments,
			Diagnostics: iidDiag{Matched: d.Matched, Discrete: got, True: truth}, provenance: prov})
	}
	fmt.Fprintf(w, "%s distribution, %d points, %d of %d moments matched\n\n", family, len(d.Nodes), d.Matched, d.Moments)
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, "point\tlevel\tweight\t")
	for i, x := range d.Nodes {
		fmt.Fprintf(tw, "%d\t%.6g\t%.6g\t\n", i, x, d.Weights[i])
	}
	tw.Flush()
	fmt.Fprintln(w)
	tw = tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, "\ttrue\tdiscrete\terror\t")
	for _, r := range []struct {
		name string
		t, g float64
	}{{"mean", truth.Mean, got.Mean}, {"variance", truth.Var, got.Var}, {"skewness", truth.Skew, got.Skew}, {"kurtosis", truth.Kurt, got.Kurt}} {
		fmt.Fprintf(tw, "%s\t%.8g\t%.8g\t%s\t\n", r.name, r.t, r.g, sci(r.g-r.t))
	}
	tw.Flush()
	if d.Matched < d.Moments {
		fmt.Fprintf(w, "\nwarning: only %d of %d moments could be matched on this grid\n", d.Matched, d.Moments)
	}
	prov.printText(w)
	return nil
}
