package manifests

import (
	"fmt"
	"math"

	"gridstage/internal/portablemath"
	"gridstage/solver"
)

// productAges is the AgeModel of a product with a life-cycle component:
// the components are discretized with their own settings and combined by
// solver.ProductAges. Its diagnostics describe the sum of the coordinates
// (log income = persistent part + transitory part): for independent
// components the cumulants of a sum are the sums of the components'
// cumulants, so the truth in every state is exact.
type productAges struct {
	parts []agePart
}

// agePart is one component: a life cycle (ages) or a time-invariant model.
type agePart struct {
	ages     lifecycleModel
	model    Model
	settings solver.Settings
}

func (p agePart) lifeCycle() bool { return p.model == nil }

var _ AgeModel = productAges{}

// DiscretizeAges ignores s: every component has its own settings.
func (m productAges) DiscretizeAges(solver.Settings) (*solver.AgeChain, error) {
	parts := make([]solver.AgePart, len(m.parts))
	for i, p := range m.parts {
		var err error
		if p.lifeCycle() {
			parts[i].Ages, err = p.ages.DiscretizeAges(p.settings)
		} else {
			parts[i].Chain, err = p.model.Discretize(p.settings)
		}
		if err != nil {
			return nil, fmt.Errorf("components[%d]: %w", i, err)
		}
	}
	return solver.ProductAges(parts...)
}

// cumulants are the first four cumulants of a law.
type cumulants [4]float64

func cumulantsOf(m solver.Moments) cumulants {
	return cumulants{m.Mean, m.Var, float64(m.Skew * portablemath.Pow(m.Var, 1.5)), float64((m.Kurt - 3) * m.Var * m.Var)}
}

func (c cumulants) add(d cumulants) cumulants {
	for k := range c {
		c[k] += d[k]
	}
	return c
}

func (c cumulants) moments() solver.Moments {
	return solver.Moments{Mean: c[0], Var: c[1], Skew: c[2] / portablemath.Pow(c[1], 1.5), Kurt: 3 + c[3]/(c[1]*c[1])}
}

// conditional returns the true cumulants of the sum of the coordinates
// next period, given the coordinates x of a state at age t.
func (m productAges) conditional(t int, x []float64) cumulants {
	var sum cumulants
	for k, p := range m.parts {
		if p.lifeCycle() {
			lc := p.ages.LifeCycle
			var shock solver.Distribution
			if lc.Shocks != nil {
				shock = lc.Shocks[t]
			}
			sum = sum.add(cumulantsOf(solver.AR1{Rho: lc.Rho[t], Sigma: lc.Sigma[t], Shock: shock}.Conditional(x[k : k+1])))
		} else {
			sum = sum.add(cumulantsOf(p.model.Conditional(x[k : k+1])))
		}
	}
	return sum
}

// marginal returns the true cumulants of the sum at every age and the
// covariance of the sum between ages t and t+1 (entry t).
func (m productAges) marginal(ages int) (law []cumulants, cov []float64) {
	law, cov = make([]cumulants, ages), make([]float64, ages-1)
	for _, p := range m.parts {
		if p.lifeCycle() {
			ms := p.ages.Marginal()
			for t, s := range ms {
				law[t] = law[t].add(cumulantsOf(solver.Moments{Mean: s.Mean, Var: float64(s.SD * s.SD), Skew: s.Skew, Kurt: s.Kurt}))
				if t > 0 {
					// Marginal's Autocorr is Corr(z_{t−1}, z_t).
					cov[t-1] += float64(s.Autocorr * s.SD * ms[t-1].SD)
				}
			}
			continue
		}
		// A time-invariant component enters in its stationary law and
		// stays in it.
		u := p.model.Unconditional()
		c := cumulantsOf(solver.Moments{Mean: u.Mean, Var: float64(u.SD * u.SD), Skew: u.Skew, Kurt: u.Kurt})
		for t := range law {
			law[t] = law[t].add(c)
		}
		for t := range cov {
			cov[t] += float64(u.Autocorr * u.SD * u.SD)
		}
	}
	return law, cov
}

// DiagnoseAges compares each move of the product chain with the truth, for
// the sum of the coordinates: in every age-t state the chain's conditional
// moments of the sum over the age-(t+1) grid against the sum of the
// components' conditional cumulants, and as unconditional moments the law
// of the sum at age t+1 (Autocorr: Corr of the sums at t and t+1), the
// chain's from its initial distribution pushed forward.
func (m productAges) DiagnoseAges(a *solver.AgeChain) []solver.Diagnostics {
	sums := make([][]float64, a.Transitions()+1)
	dim := a.Ages[0].Dim
	for t := range sums {
		g := a.Grid(t)
		sums[t] = make([]float64, len(g)/dim)
		for i := range sums[t] {
			for _, x := range g[i*dim : (i+1)*dim] {
				sums[t][i] += x
			}
		}
	}
	marg := a.Marginals()
	law, cov := m.marginal(a.Transitions() + 1)
	out := make([]solver.Diagnostics, a.Transitions())
	for t, c := range a.Ages {
		d := solver.Diagnostics{Method: c.Method.String(), States: make([]solver.StateCheck, c.States()), Fallbacks: c.Fallbacks()}
		from := solver.WeightedMoments(marg[t], sums[t])
		var chainCov float64
		for i := range d.States {
			cm := solver.WeightedMoments(c.Row(i), sums[t+1])
			tm := m.conditional(t, c.State(i)).moments()
			chainCov += float64(marg[t][i] * (sums[t][i] - from.Mean) * cm.Mean)
			d.States[i] = stateCheck(c.State(i), cm, tm, c.Matched[i])
			d.WorstRelErr.Mean = math.Max(d.WorstRelErr.Mean, math.Abs(d.States[i].RelErr.Mean))
			d.WorstRelErr.Var = math.Max(d.WorstRelErr.Var, math.Abs(d.States[i].RelErr.Var))
			d.WorstRelErr.Skew = math.Max(d.WorstRelErr.Skew, math.Abs(d.States[i].RelErr.Skew))
			d.WorstRelErr.Kurt = math.Max(d.WorstRelErr.Kurt, math.Abs(d.States[i].RelErr.Kurt))
		}
		next := solver.WeightedMoments(marg[t+1], sums[t+1])
		d.Chain = solver.Summary{Mean: next.Mean, SD: math.Sqrt(next.Var), Skew: next.Skew, Kurt: next.Kurt,
			Autocorr: chainCov / math.Sqrt(float64(from.Var*next.Var))}
		tt := law[t+1].moments()
		d.True = solver.Summary{Mean: tt.Mean, SD: math.Sqrt(tt.Var), Skew: tt.Skew, Kurt: tt.Kurt,
			Autocorr: cov[t] / math.Sqrt(float64(law[t][1]*law[t+1][1]))}
		out[t] = d
	}
	return out
}

// stateCheck compares a state's conditional moments with the truth in the
// units of solver.Diagnose.
func stateCheck(level []float64, cm, tm solver.Moments, matched int) solver.StateCheck {
	sd := math.Sqrt(tm.Var)
	abs := solver.Moments{Mean: cm.Mean - tm.Mean, Var: cm.Var - tm.Var, Skew: cm.Skew - tm.Skew, Kurt: cm.Kurt - tm.Kurt}
	rel := solver.Moments{Mean: abs.Mean / sd, Var: abs.Var / tm.Var, Skew: abs.Skew, Kurt: abs.Kurt / tm.Kurt}
	return solver.StateCheck{Level: append([]float64(nil), level...), Chain: cm, True: tm, AbsErr: abs, RelErr: rel, Matched: matched}
}
