package main

import (
	"fmt"
	"io"
	"text/tabwriter"

	"github.com/spf13/cobra"

	"gridstage/internal/finitejson"
	"gridstage/solver"
)

func newIIDCmd() *cobra.Command {
	var (
		ms       methodSettings
		shock    shockFlags
		withSens bool
	)
	cmd := &cobra.Command{
		Use:   "iid --distribution LAW [parameters] --states N [flags]",
		Short: "A static distribution as weighted points with exactly matched moments",
		Long: `A static (i.i.d.) distribution as weighted points with exactly matched moments.

Distributions and their parameters (the keys of a manifest's distribution,
with - for _):
  normal     --mean, --sd                        N(mean, sd^2)
  lognormal  --log-mean, --log-sd                exp(N(log-mean, log-sd^2))
  beta       --alpha, --beta, --lower, --upper   Beta(alpha, beta) on [lower, upper]
  mixture    --component (once per component)    normal mixture
  t          --nu, --location, --scale           location + scale * t(nu)
  laplace    --location, --scale                 density exp(-|x-location|/scale)/(2 scale)`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			if _, err := ms.settings(cmd); err != nil {
				return err
			}
			d, err := shock.distribution()
			if err != nil {
				return err
			}
			law := shock.distributionLaw()
			entry := ms.entry(cmd, map[string]any{"kind": "iid", "distribution": law})
			sol, prov, advice, err := solveEntry(entry)
			if err != nil {
				return err
			}
			c := sol.Chain
			out := &solver.Discrete{Nodes: c.Grid, Weights: c.Row(0), Moments: c.Moments, Matched: c.Matched[0]}
			if c.PriorKL != nil {
				out.PriorKL = c.PriorKL[0]
			}
			var sens *solver.Sensitivity
			if withSens {
				if sens, err = specSensitivities(prov.Spec, c); err != nil {
					return err
				}
			}
			return printIID(cmd.OutOrStdout(), law, out, solver.IID{Dist: d}, prov, advice, sens, ms.json)
		},
	}
	fs := cmd.Flags()
	ms.register(cmd, false)
	fs.BoolVar(&withSens, "sensitivities", false, "add the derivatives of the points and the weights with respect to each parameter of the law to the JSON (normal, lognormal, t or laplace)")
	shock.register(fs, "distribution", "normal", "the law: normal, lognormal, beta, mixture, t or laplace")
	fs.Float64Var(&shock.mean, "mean", 0, "normal: mean")
	fs.Float64Var(&shock.sd, "sd", 1, "normal: standard deviation")
	fs.Float64Var(&shock.logMean, "log-mean", 0, "lognormal: mean of the log")
	fs.Float64Var(&shock.logSD, "log-sd", 1, "lognormal: standard deviation of the log")
	fs.Float64Var(&shock.alpha, "alpha", 2, "beta: first shape parameter")
	fs.Float64Var(&shock.beta, "beta", 2, "beta: second shape parameter")
	fs.Float64Var(&shock.lower, "lower", 0, "beta: lower end of the support")
	fs.Float64Var(&shock.upper, "upper", 1, "beta: upper end of the support")
	fs.Float64Var(&shock.location, "location", 0, "t and laplace: location")
	fs.Float64Var(&shock.scale, "scale", 1, "t and laplace: scale")
	return cmd
}

// distribution validates the flags of the chosen family.
func (s *shockFlags) distribution() (solver.Distribution, error) {
	if err := choice("distribution", s.family, []string{"normal", "lognormal", "beta", "mixture", "t", "laplace"}); err != nil {
		return nil, err
	}
	switch s.family {
	case "normal":
		if err := finite("mean", s.mean); err != nil {
			return nil, err
		}
		if err := positive("sd", s.sd); err != nil {
			return nil, err
		}
		return solver.Normal{Mu: s.mean, Sigma: s.sd}, nil
	case "lognormal":
		if err := finite("log-mean", s.logMean); err != nil {
			return nil, err
		}
		if err := positive("log-sd", s.logSD); err != nil {
			return nil, err
		}
		return solver.LogNormal{Mu: s.logMean, Sigma: s.logSD}, nil
	case "beta":
		for _, f := range []struct {
			name string
			v    float64
		}{{"alpha", s.alpha}, {"beta", s.beta}} {
			if err := positive(f.name, f.v); err != nil {
				return nil, err
			}
		}
		if err := finite("lower", s.lower); err != nil {
			return nil, err
		}
		if err := finite("upper", s.upper); err != nil {
			return nil, err
		}
		if !(s.upper > s.lower) {
			return nil, badInput("--upper %g is out of range: want a number above --lower %g", s.upper, s.lower)
		}
		return solver.Beta{Alpha: s.alpha, Beta: s.beta, Lo: s.lower, Hi: s.upper}, nil
	case "mixture":
		return s.mixture()
	case "t":
		if err := s.checkNu(2); err != nil {
			return nil, err
		}
		if err := finite("location", s.location); err != nil {
			return nil, err
		}
		if err := positive("scale", s.scale); err != nil {
			return nil, err
		}
		return solver.StudentT{Nu: s.nu, Loc: s.location, Scale: s.scale}, nil
	default: // laplace
		if err := finite("location", s.location); err != nil {
			return nil, err
		}
		if err := positive("scale", s.scale); err != nil {
			return nil, err
		}
		return solver.Laplace{Loc: s.location, Scale: s.scale}, nil
	}
}

type iidJSON struct {
	Kind         string         `json:"kind"`
	Distribution map[string]any `json:"distribution"`
	Grid         [][]float64    `json:"grid"`
	Weights      []float64      `json:"weights"`
	Moments      int            `json:"moments"`
	Diagnostics  iidDiag        `json:"diagnostics"`
	// Advice says what grid would carry the requested moments.
	Advice string `json:"advice,omitempty"`
	// Sensitivities holds the derivatives (--sensitivities).
	Sensitivities *iidSensitivityJSON `json:"sensitivities,omitempty"`
	provenance
}

// iidSensitivityJSON holds, for each parameter of the law, the derivative
// of every point (one array per point, as grid) and of the weights.
type iidSensitivityJSON struct {
	Params  []string               `json:"params"`
	Grid    map[string][][]float64 `json:"grid"`
	Weights map[string][]float64   `json:"weights"`
}

type iidDiag struct {
	Matched  int            `json:"matched"`
	Discrete solver.Moments `json:"discrete"`
	True     solver.Moments `json:"true"`
	// PriorKL is the weights' Kullback-Leibler divergence from the node
	// rule's prior; Shape how far they are from unimodal.
	PriorKL float64         `json:"prior_kl"`
	Shape   solver.RowShape `json:"shape"`
}

func printIID(w io.Writer, law map[string]any, d *solver.Discrete, p solver.IID, prov provenance, advice string, sens *solver.Sensitivity, asJSON bool) error {
	got := solver.WeightedMoments(d.Weights, d.Nodes)
	truth := p.Conditional(nil)
	shape := solver.Shape(d.Weights, d.Nodes)
	if asJSON {
		grid := make([][]float64, len(d.Nodes))
		for i, x := range d.Nodes {
			grid[i] = []float64{x}
		}
		j := iidJSON{Kind: "iid", Distribution: law, Grid: grid, Weights: d.Weights, Moments: d.Moments,
			Diagnostics: iidDiag{Matched: d.Matched, Discrete: got, True: truth, PriorKL: d.PriorKL, Shape: shape}, Advice: advice, provenance: prov}
		if sens != nil {
			j.Sensitivities = &iidSensitivityJSON{Params: sens.Params, Grid: map[string][][]float64{}, Weights: map[string][]float64{}}
			for k, name := range sens.Params {
				g := make([][]float64, len(d.Nodes))
				for i := range g {
					g[i] = sens.Grid[k][i : i+1]
				}
				j.Sensitivities.Grid[name], j.Sensitivities.Weights[name] = g, sens.Stationary[k]
			}
		}
		return finitejson.Encode(w, j)
	}
	if d.Moments == 0 {
		fmt.Fprintf(w, "%s distribution, %d points, no moment matched: the weights are the node rule's own times the density, normalised\n\n", law["law"], len(d.Nodes))
	} else {
		fmt.Fprintf(w, "%s distribution, %d points, %d of %d moments matched\n\n", law["law"], len(d.Nodes), d.Matched, d.Moments)
	}
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
	fmt.Fprintf(w, "\nKullback-Leibler divergence of the weights from the node rule's prior: %.4g\n", d.PriorKL)
	if shape.FarFromUnimodal {
		fmt.Fprintf(w, "\nwarning: the weights are far from unimodal: %.3g of the probability lies beyond a valley, a point below %g times a weight farther out\n",
			shape.StrandedMass, solver.ValleyRatio)
	}
	if d.Matched < d.Moments {
		fmt.Fprintf(w, "\nwarning: only %d of %d moments could be matched on this grid (proven infeasible there)\n", d.Matched, d.Moments)
		if advice != "" {
			fmt.Fprintln(w, "advice: "+advice)
		}
	}
	prov.printText(w)
	return nil
}
