package solver

import "math"

// ComponentChecks compares, state by state, the conditional moments of
// coordinate k of a vector chain's next state with the truth's marginal
// ones, in the units of Diagnose: the univariate check applied to one
// component, so that every component of a VAR gets its own error figure
// (Diagnose checks the first). Only Method, States and Fallbacks are
// filled; the stationary law of a vector chain is DiagnoseVector's. Matched
// and Certificate are the chain's per state (they concern the whole moment
// set). It panics if k or the truth's dimension does not fit the chain.
func ComponentChecks(c *Chain, truth VectorTruth, k int) Diagnostics {
	d, n := c.Dim, c.States()
	if truth.Dim() != d || k < 0 || k >= d {
		panic("solver: ComponentChecks dimension mismatch")
	}
	out := Diagnostics{Method: c.Method.String(), States: make([]StateCheck, n), Fallbacks: c.Fallbacks()}
	x := func(j int) float64 { return c.Grid[j*d+k] }
	for i := 0; i < n; i++ {
		cm := weightedMoments(c.Row(i), x)
		vm := truth.VectorConditional(c.State(i))
		tm := Moments{Mean: vm.Mean[k], Var: vm.Cov[k*d+k], Skew: vm.Skew[k], Kurt: vm.Kurt[k]}
		sd := math.Sqrt(tm.Var)
		abs := Moments{cm.Mean - tm.Mean, cm.Var - tm.Var, cm.Skew - tm.Skew, cm.Kurt - tm.Kurt}
		rel := Moments{abs.Mean / sd, abs.Var / tm.Var, abs.Skew, abs.Kurt / tm.Kurt}
		out.States[i] = StateCheck{
			Level: append([]float64(nil), c.State(i)...), Chain: cm, True: tm,
			AbsErr: abs, RelErr: rel, Matched: c.Matched[i], Certificate: c.Certificate(i),
		}
		out.WorstRelErr.Mean = math.Max(out.WorstRelErr.Mean, math.Abs(rel.Mean))
		out.WorstRelErr.Var = math.Max(out.WorstRelErr.Var, math.Abs(rel.Var))
		out.WorstRelErr.Skew = math.Max(out.WorstRelErr.Skew, math.Abs(rel.Skew))
		out.WorstRelErr.Kurt = math.Max(out.WorstRelErr.Kurt, math.Abs(rel.Kurt))
	}
	return out
}
