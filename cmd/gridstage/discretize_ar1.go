package main

import (
	"errors"

	"github.com/spf13/cobra"

	"gridstage/manifests"
	"gridstage/solver"
)

func newAR1Cmd() *cobra.Command {
	var (
		rho, sigma, mean float64
		ms               methodSettings
		shock            shockFlags
		withSens         bool
	)
	cmd := &cobra.Command{
		Use:   "ar1 --rho R --sigma S [--mean M] --states N [flags]",
		Short: "AR(1): x' = (1-rho) mean + rho x + sigma z, z with mean 0 and variance 1",
		Args:  cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			for _, f := range []string{"rho", "sigma"} {
				if !cmd.Flags().Changed(f) {
					return badInput("--%s is required", f)
				}
			}
			s, err := ms.settings(cmd)
			if err != nil {
				return err
			}
			z, err := innovation(&shock)
			if err != nil {
				return err
			}
			if err := needsNormal(z, s.Method, ms.compare); err != nil {
				return err
			}
			p := solver.AR1{Mean: mean, Rho: rho, Sigma: sigma, Shock: z}
			if err := p.Validate(); err != nil {
				return flagError(err, paramFlags)
			}
			if err := ms.checkCompare(); err != nil {
				return err
			}
			entry := ms.entry(cmd, map[string]any{"kind": "ar1", "rho": rho, "sigma": sigma, "mean": mean})
			if shock.family != "normal" {
				entry["innovation"] = shock.law()
			}
			sol, prov, advice, err := solveEntry(entry)
			if err != nil {
				return err
			}
			out := chainReport{Kind: "ar1", Process: ar1Params(p, shock), Chain: sol.Chain, Diag: sol.Diagnostics,
				Baseline: sol.Baseline, BaselineDiag: sol.BaselineDiagnostics, Provenance: &prov, Advice: advice}
			if withSens {
				if out.Sensitivities, err = specSensitivities(prov.Spec, sol.Chain); err != nil {
					return err
				}
			}
			return out.print(cmd.OutOrStdout(), ms.json)
		},
	}
	fs := cmd.Flags()
	fs.Float64Var(&rho, "rho", 0, "persistence, in (-1, 1) (required)")
	fs.Float64Var(&sigma, "sigma", 0, "innovation standard deviation, > 0 (required)")
	fs.Float64Var(&mean, "mean", 0, "unconditional mean")
	fs.BoolVar(&withSens, "sensitivities", false, "add the derivatives of the grid, the transition matrix and the stationary distribution with respect to mean, rho, sigma (and a t innovation's nu) to the JSON (maxent; normal or t innovation)")
	ms.register(cmd, true)
	shock.register(fs, "innovation", "normal", "innovation law: normal, mixture, t or laplace (standardized to mean 0, variance 1)")
	return cmd
}

// needsNormal refuses adda-cooper, as the chain's or the baseline's method,
// with a non-normal innovation (z non-nil): Adda and Cooper (2003) cut the
// normal stationary law into equal-probability intervals.
func needsNormal(z solver.Distribution, method solver.Method, compare string) error {
	if z == nil {
		return nil
	}
	const why = "needs --innovation normal: Adda and Cooper (2003) cut the normal stationary law into equal-probability intervals"
	if method == solver.AddaCooper {
		return badInput("--method adda-cooper %s", why)
	}
	if compare == solver.AddaCooper.String() {
		return badInput("--compare adda-cooper %s", why)
	}
	return nil
}

// innovation builds the standardized innovation law (nil for normal).
func innovation(s *shockFlags) (solver.Distribution, error) {
	if err := choice("innovation", s.family, []string{"normal", "mixture", "t", "laplace"}); err != nil {
		return nil, err
	}
	switch s.family {
	case "mixture":
		m, err := s.mixture()
		if err != nil {
			return nil, err
		}
		return solver.Standardized{Base: m}, nil
	case "t":
		if err := s.checkNu(2); err != nil {
			return nil, err
		}
		return solver.Standardized{Base: solver.StudentT{Nu: s.nu, Scale: 1}}, nil
	case "laplace":
		return solver.Standardized{Base: solver.Laplace{Scale: 1}}, nil
	}
	return nil, nil
}

// ar1Params records the process for the JSON output, under the keys a
// manifest uses.
func ar1Params(p solver.AR1, s shockFlags) map[string]any {
	return map[string]any{"rho": p.Rho, "sigma": p.Sigma, "mean": p.Mean, "innovation": s.law()}
}

// specSensitivities differentiates the chain a discretize command solved,
// rebuilt from its canonical spec and checked against it bit for bit
// (manifests.Job.Sensitivities).
func specSensitivities(spec []byte, solved *solver.Chain) (*solver.Sensitivity, error) {
	job, err := manifests.ParseSpec(spec)
	if err != nil {
		return nil, err
	}
	sens, err := job.Sensitivities(solved)
	if errors.Is(err, solver.ErrNoSensitivities) || errors.Is(err, solver.ErrNotDifferentiable) {
		return nil, badInput("--sensitivities: %v", err)
	}
	return sens, err
}
