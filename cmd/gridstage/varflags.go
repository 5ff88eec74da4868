package main

import (
	"errors"
	"math"
	"strings"

	"github.com/spf13/cobra"
	"github.com/spf13/pflag"

	"gridstage/solver"
)

// univariateOnly refuses a method that is defined for a univariate AR(1)
// only when it is asked for on a VAR, saying why. Adda and Cooper (2003)
// cut a univariate normal stationary law into equal-probability
// intervals; applying that per axis is not their method (unless the axes
// are independent AR(1)s, the next period's value on one axis depends on
// the others), so gridstage does not offer it.
func univariateOnly(flag, method string) error {
	if method == solver.AddaCooper.String() {
		return badInput("--%s adda-cooper does not apply to a VAR: Adda and Cooper (2003) cut the stationary law of a univariate normal AR(1) into equal-probability intervals; want maxent or tauchen", flag)
	}
	return nil
}

// varFlags describe a VAR(1) x' = c + B x + ε, ε ~ N(0, Ψ), on the command
// line as row-major comma-separated lists: --intercept c, --coef B, --cov Ψ.
type varFlags struct {
	coef, cov, intercept []float64
}

func (f *varFlags) register(fs *pflag.FlagSet) {
	fs.Float64SliceVar(&f.coef, "coef", nil, "coefficient matrix as a row-major `LIST` of d*d numbers, d from 1 to 4 (required)")
	fs.Float64SliceVar(&f.cov, "cov", nil, "innovation covariance matrix as a row-major `LIST` of d*d numbers, symmetric positive definite (required)")
	fs.Float64SliceVar(&f.intercept, "intercept", nil, "intercept as a `LIST` of d numbers (default zeros)")
	for _, name := range []string{"coef", "cov", "intercept"} {
		// An empty list is no default worth showing: help would print
		// "(default [])" after the text above.
		fs.Lookup(name).DefValue = ""
	}
}

// process validates the flags and returns the VAR; every error names the
// flag and what was expected.
func (f *varFlags) process(cmd *cobra.Command) (solver.VAR, error) {
	for _, name := range []string{"coef", "cov"} {
		if !cmd.Flags().Changed(name) {
			return solver.VAR{}, badInput("--%s is required (a row-major list of d*d numbers)", name)
		}
	}
	p := solver.VAR{Coef: f.coef, Cov: f.cov, Intercept: f.intercept}
	d := p.Dim()
	if d == 0 {
		return p, badInput("--coef has %d entries: want d*d for a dimension d from 1 to %d (1, 4, 9 or 16 numbers, row-major)", len(f.coef), solver.MaxVARDim)
	}
	if len(f.cov) != d*d {
		return p, badInput("--cov has %d entries: want %d (d*d for the %d-dimensional VAR given by --coef)", len(f.cov), d*d, d)
	}
	if f.intercept != nil && len(f.intercept) != d {
		return p, badInput("--intercept has %d entries: want %d, one per variable", len(f.intercept), d)
	}
	for _, v := range []struct {
		name string
		vals []float64
	}{{"coef", f.coef}, {"cov", f.cov}, {"intercept", f.intercept}} {
		for i, x := range v.vals {
			if math.IsNaN(x) || math.IsInf(x, 0) {
				return p, badInput("--%s entry %d = %g is out of range: want a finite number", v.name, i+1, x)
			}
		}
	}
	for k := 0; k < d; k++ {
		for l := k + 1; l < d; l++ {
			if a, b := f.cov[k*d+l], f.cov[l*d+k]; a != b {
				return p, badInput("--cov is not symmetric: cov[%d,%d] = %g but cov[%d,%d] = %g", k+1, l+1, a, l+1, k+1, b)
			}
		}
	}
	if err := p.Validate(); err != nil {
		var pe *solver.ParamError
		if errors.As(err, &pe) {
			switch {
			case pe.Param == "coef spectral radius" && pe.Value >= 1:
				return p, badInput("--coef has spectral radius %.6g: want < 1 (a stationary VAR)", pe.Value)
			case pe.Param == "coef spectral radius":
				return p, badInput("--coef has spectral radius %.10g: want %s", pe.Value, pe.Want)
			case pe.Param == "cov smallest eigenvalue" && !(pe.Value > 0):
				return p, badInput("--cov is not positive definite: its smallest eigenvalue is %.6g, want > 0", pe.Value)
			case strings.HasPrefix(pe.Param, "cov") || strings.HasPrefix(pe.Param, "sqrt(cov"):
				return p, badInput("--cov is out of range: %s = %.6g, want %s", pe.Param, pe.Value, pe.Want)
			}
			return p, badInput("%s = %.6g is out of range: want %s", pe.Param, pe.Value, pe.Want)
		}
		return p, badInput("%v", err)
	}
	return p, nil
}

// axisStates validates --states for a d-dimensional tensor grid: 2 to
// ⌊MaxStates^(1/d)⌋ points per axis, at most solver.MaxStates in all.
func axisStates(n, d int) error {
	hi := 1
	for {
		next := 1
		for k := 0; k < d; k++ {
			next *= hi + 1
		}
		if next > solver.MaxStates {
			break
		}
		hi++
	}
	if n < 2 || n > hi {
		return badInput("--states %d is out of range: want an integer from 2 to %d per axis for a %d-dimensional VAR (at most %d states in all)", n, hi, d, solver.MaxStates)
	}
	return nil
}

// varParams records the process for JSON output.
func varParams(p solver.VAR) map[string]any {
	c := p.Intercept
	if c == nil {
		c = make([]float64, p.Dim())
	}
	return map[string]any{"dim": p.Dim(), "coef": p.Coef, "cov": p.Cov, "intercept": c}
}
