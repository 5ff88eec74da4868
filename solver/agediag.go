package solver

import "math"

// AgeCheck compares the move from age t to age t+1 of a life-cycle chain
// with the truth.
type AgeCheck struct {
	// Age is t, the age moved from.
	Age int `json:"age"`
	// WorstRelErr holds the largest standardized conditional-moment errors
	// over the states of age t, in the units of Diagnostics.
	WorstRelErr Moments `json:"worst_std_error"`
	Fallbacks   int     `json:"fallback_states"`
	// Chain and True are the marginal moments of z_{t+1} (Autocorr is
	// Corr(z_t, z_{t+1})): the chain's from Initial pushed forward through
	// the transitions, the truth's from the cumulant recursion.
	Chain Summary `json:"chain_marginal"`
	True  Summary `json:"true_marginal"`
}

// AgeDiagnostics compares a life-cycle chain with its process.
type AgeDiagnostics struct {
	Method       string     `json:"method"`
	InitialChain Summary    `json:"initial_chain"`
	InitialTrue  Summary    `json:"initial_true"`
	Ages         []AgeCheck `json:"ages"`
}

// DiagnoseAges computes the diagnostics of a life-cycle chain built from
// p. The chain is not modified.
func DiagnoseAges(a *AgeChain, p LifeCycle) AgeDiagnostics {
	truth := p.Marginal()
	marg := a.Marginals()
	out := AgeDiagnostics{Method: a.Method.String(), InitialTrue: truth[0], Ages: make([]AgeCheck, len(a.Ages))}
	m0 := WeightedMoments(marg[0], a.Grid(0))
	out.InitialChain = Summary{Mean: m0.Mean, SD: math.Sqrt(m0.Var), Skew: m0.Skew, Kurt: m0.Kurt}
	for t, c := range a.Ages {
		next := a.Grid(t + 1)
		step := AR1{Rho: p.Rho[t], Sigma: p.Sigma[t], Shock: p.shock(t)}
		chk := AgeCheck{Age: t, Fallbacks: c.Fallbacks(), True: truth[t+1]}
		from := WeightedMoments(marg[t], a.Grid(t))
		var cov float64
		for i, z := range c.Grid {
			row := c.Row(i)
			cm := WeightedMoments(row, next)
			// AR1.Conditional with mean 0 is ρ_t z and σ_t² (ρ_t is not
			// range-checked there, so |ρ_t| ≥ 1 is fine).
			tm := step.Conditional([]float64{z})
			sd := math.Sqrt(tm.Var)
			chk.WorstRelErr.Mean = math.Max(chk.WorstRelErr.Mean, math.Abs(cm.Mean-tm.Mean)/sd)
			chk.WorstRelErr.Var = math.Max(chk.WorstRelErr.Var, math.Abs(cm.Var-tm.Var)/tm.Var)
			chk.WorstRelErr.Skew = math.Max(chk.WorstRelErr.Skew, math.Abs(cm.Skew-tm.Skew))
			chk.WorstRelErr.Kurt = math.Max(chk.WorstRelErr.Kurt, math.Abs(cm.Kurt-tm.Kurt)/tm.Kurt)
			// Cov(z_t, z_{t+1}) = E[(z_t − μ_t) E[z_{t+1} | z_t]].
			cov += float64(marg[t][i] * (z - from.Mean) * cm.Mean)
		}
		m := WeightedMoments(marg[t+1], next)
		chk.Chain = Summary{Mean: m.Mean, SD: math.Sqrt(m.Var), Skew: m.Skew, Kurt: m.Kurt,
			Autocorr: cov / math.Sqrt(float64(from.Var*m.Var))}
		out.Ages[t] = chk
	}
	return out
}
