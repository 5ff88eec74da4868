package solver

import (
	"errors"
	"math"
)

// ErrNoSensitivities reports a chain whose parameter derivatives are not
// available: a baseline method, an AR(1) innovation law without a score
// (Laplace, mixture), an i.i.d. law without them (beta, mixture).
var ErrNoSensitivities = errors.New("solver: no parameter sensitivities for this chain (they need method maxent; an AR(1) innovation normal or t; an iid law normal, lognormal, t or laplace)")

// Sensitivity holds the derivatives of a chain with respect to the
// parameters of its process, at the parameters it was built with.
//
// They are exact up to rounding: in every state the probabilities
// p_j ∝ q_j exp(λ·dev_j) solve the dual's optimality condition
// G(λ, θ) = E_p dev + r'(λ) = 0 (r = 0 for the exact policy, at the level
// the state matched), so by the implicit function theorem
//
//	dλ/dθ = −H⁻¹ ∂G/∂θ,   H = Cov_p(dev) + diag r''(λ),
//
// where ∂G/∂θ carries the grid's and the conditional law's own dependence
// on θ, and dp_j/dθ = p_j (ȧ_j − E_p ȧ) with ȧ_j the total derivative of
// log q_j + λ·dev_j. The stationary law π (π P = π) moves by
//
//	dπ/dθ = π (dP/dθ) (I − P + 1π)⁻¹
//
// (the fundamental matrix of Kemeny and Snell 1960; Schweitzer 1968). Under
// the exact policy the derivative is that of the branch the chain is on:
// where a state changes level the chain jumps and has no derivative.
type Sensitivity struct {
	// Params names the parameters, in the order of the other fields.
	Params []string
	// Grid[k][i*Dim+d] is ∂(state i, coordinate d)/∂θ_k.
	Grid [][]float64
	// Transition[k][i*N+j] is ∂P_ij/∂θ_k; every row sums to zero.
	Transition [][]float64
	// Stationary[k][i] is ∂π_i/∂θ_k; it sums to zero.
	Stationary [][]float64
}

// rowMultipliers keeps, for every from-state a scalar maxent solve
// handled, the multipliers the policy ended with, so that the rows can be
// differentiated afterwards.
type rowMultipliers struct {
	lam    [][]float64 // per state; nil for a mirrored state
	regH   [][]float64 // the penalty's curvature (smooth policy), or nil
	mirror []int       // the state a mirrored state copies, or −1
}

// scorer is a standardized law whose log density has a derivative.
type scorer interface {
	Score(z float64) float64
}

// shockScore returns d log f/dz of the standardized shock (nil: normal),
// or false when the law has no score here.
func shockScore(shock Distribution) (func(float64) float64, bool) {
	if shock == nil {
		return func(z float64) float64 { return -z }, true
	}
	if s, ok := shock.(scorer); ok {
		return s.Score, true
	}
	return nil, false
}

// Score is d log f/dz of the standardized law, when the wrapped law has one.
func (s Standardized) Score(z float64) float64 {
	b, ok := s.Base.(scorer)
	if !ok {
		return math.NaN()
	}
	sd := s.Base.StdDev()
	return float64(sd * b.Score(s.Base.Mean()+float64(sd*z)))
}

// Score is d log f/dx = −(ν+1)(x − loc)/(ν s² + (x − loc)²).
func (d StudentT) Score(x float64) float64 {
	u := x - d.Loc
	return -(d.Nu + 1) * u / (float64(d.Nu*d.Scale*d.Scale) + float64(u*u))
}

// Score is d log f/dx = −(x − μ)/σ².
func (d Normal) Score(x float64) float64 { return -(x - d.Mu) / (d.Sigma * d.Sigma) }

// scalarRowSens differentiates the maxent rows of a scalar chain: nodes
// move by dNodes[k][j], the conditional law of from-state i by
// dMean[k][i] and dSD[k][i]. It fills dTrans[k] (m×n).
func scalarRowSens(nodes []float64, law conditional, L int, trans []float64, keep *rowMultipliers,
	dNodes, dMean, dSD [][]float64, dTrans [][]float64) {
	n, m, P := len(nodes), len(law.Mean), len(dNodes)
	targets := shockTargets(law.Shock, L)
	score, _ := shockScore(law.Shock)
	z := make([]float64, n)
	dev := make([]float64, n*L)
	abar := make([]float64, n)
	dz := make([]float64, n)
	grad := make([]float64, L)
	dlam := make([]float64, L)
	hess := make([]float64, L*L)
	chol := make([]float64, L*L)
	for i := 0; i < m; i++ {
		if keep.mirror[i] >= 0 {
			continue
		}
		lam := keep.lam[i]
		cols := len(lam)
		row := trans[i*n : (i+1)*n]
		mi, s := law.Mean[i], law.SD[i]
		for j, x := range nodes {
			z[j] = (x - mi) / s
		}
		if cols > 0 {
			fillDeviations(z, targets[:cols], dev[:n*cols])
			covariance(row, dev[:n*cols], cols, grad, hess)
			for k := 0; k < cols; k++ {
				if keep.regH[i] != nil {
					hess[k*cols+k] += keep.regH[i][k]
				}
			}
			if !cholesky(hess[:cols*cols], chol[:cols*cols], cols) {
				regularizeCholesky(hess[:cols*cols], chol[:cols*cols], cols)
			}
		}
		for t := 0; t < P; t++ {
			for j := range z {
				dz[j] = (dNodes[t][j]-dMean[t][i])/s - z[j]*dSD[t][i]/s
			}
			// ȧ at fixed λ: the prior's and the moment functions' motion.
			var ebar float64
			for j := range z {
				a := float64(score(z[j]) * dz[j])
				pow := 1.0
				for k := 0; k < cols; k++ {
					a += float64(lam[k] * float64(float64(k+1)*pow) * dz[j])
					pow = float64(pow * z[j])
				}
				abar[j] = a
				ebar += float64(row[j] * a)
			}
			if cols > 0 {
				// ∂G/∂θ = Σ p_j (ȧ_j − Eȧ) dev_j + Σ p_j ∂dev_j.
				clear(grad[:cols])
				for j := range z {
					w := float64(row[j] * (abar[j] - ebar))
					pow := 1.0
					for k := 0; k < cols; k++ {
						grad[k] += float64(w*dev[j*cols+k]) + float64(row[j]*float64(float64(k+1)*pow)*dz[j])
						pow = float64(pow * z[j])
					}
				}
				cholSolve(chol[:cols*cols], cols, grad[:cols], dlam[:cols])
				for j := range z {
					var s float64
					for k := 0; k < cols; k++ {
						s += float64(dlam[k] * dev[j*cols+k])
					}
					abar[j] -= s // dλ = −H⁻¹ ∂G
				}
				ebar = 0
				for j := range z {
					ebar += float64(row[j] * abar[j])
				}
			}
			out := dTrans[t][i*n : (i+1)*n]
			for j := range z {
				// A zero probability stays zero: its derivative is +0,
				// not the −0 the product would give (JSON and most
				// readers print both as 0, which would hide a sign bit).
				if row[j] == 0 {
					out[j] = 0
					continue
				}
				out[j] = float64(row[j] * (abar[j] - ebar))
			}
		}
	}
	for i := 0; i < m; i++ {
		k := keep.mirror[i]
		if k < 0 {
			continue
		}
		for t := 0; t < P; t++ {
			mirrorRow(dTrans[t][i*n:(i+1)*n], dTrans[t][k*n:(k+1)*n])
		}
	}
}

// covariance sets g = E_p dev and the lower triangle of h = Cov_p(dev),
// computed about g.
func covariance(p, dev []float64, L int, g, h []float64) {
	clear(g[:L])
	clear(h[:L*L])
	for j, pj := range p {
		for r := 0; r < L; r++ {
			g[r] += float64(pj * dev[j*L+r])
		}
	}
	for j, pj := range p {
		if pj == 0 {
			continue
		}
		for r := 0; r < L; r++ {
			dr := float64(pj * (dev[j*L+r] - g[r]))
			for c := 0; c <= r; c++ {
				h[r*L+c] += float64(dr * (dev[j*L+c] - g[c]))
			}
		}
	}
}

// regularizeCholesky factors h + μ·diag-scale·I with the smallest μ that
// works: a Hessian singular in rounding (a state sitting on a facet of its
// hull) has no derivative there; the damped one gives the limit along the
// facet.
func regularizeCholesky(h, l []float64, L int) {
	var scale float64
	for r := 0; r < L; r++ {
		scale = math.Max(scale, h[r*L+r])
	}
	for mu := 1e-14; mu < 1; mu = float64(mu * 10) {
		for r := 0; r < L; r++ {
			h[r*L+r] += float64(mu * math.Max(scale, 1e-300))
		}
		if cholesky(h, l, L) {
			return
		}
	}
}

// Sensitivities builds the chain as Discretize does and its derivatives
// with respect to the mean, ρ and σ (Params "mean", "rho", "sigma") and,
// for a Student t innovation, its degrees of freedom ("innovation.nu",
// as a sweep names it: the grid, scaled by the stationary s.d., does not
// move; the prior and the moment targets do). It returns ErrNoSensitivities for a baseline
// method or an innovation law without a score.
func (p AR1) Sensitivities(s Settings) (*Chain, *Sensitivity, error) {
	if s.Method != MaxEnt {
		return nil, nil, ErrNoSensitivities
	}
	if _, ok := shockScore(p.Shock); !ok {
		return nil, nil, ErrNoSensitivities
	}
	if st, ok := p.Shock.(Standardized); ok {
		if _, ok := st.Base.(scorer); !ok {
			return nil, nil, ErrNoSensitivities
		}
	}
	if err := p.Validate(); err != nil {
		return nil, nil, err
	}
	if err := checkStates(s.States); err != nil {
		return nil, nil, err
	}
	if !(s.Width >= 0) || math.IsInf(s.Width, 1) {
		return nil, nil, badParam("width", s.Width, "finite and > 0")
	}
	L, err := resolveMoments(s, p.Shock)
	if err != nil {
		return nil, nil, err
	}
	n := s.States
	sdY := p.StationarySD()
	nodes, logW := placeGrid(s.Nodes, n, p.Mean, sdY, s.Width, Normal{p.Mean, sdY})
	law := conditional{Mean: make([]float64, n), SD: make([]float64, n), Shock: p.Shock}
	for i, x := range nodes {
		law.Mean[i] = float64((1-p.Rho)*p.Mean) + float64(p.Rho*x)
		law.SD[i] = p.Sigma
	}
	c := &Chain{Dim: 1, Method: MaxEnt, Moments: L, Grid: nodes, Transition: make([]float64, n*n),
		Matched: make([]int, n), Certificates: make([]Certificate, n)}
	keep := &rowMultipliers{}
	maxentRowsKeep(nodes, logW, law, L, s.Matching, c.Transition, c.Matched, c.Certificates, keep)
	c.PriorKL = scalarPriorKL(nodes, logW, law, c.Transition)

	const P = 3
	dNodes, dMean, dSD := make([][]float64, P), make([][]float64, P), make([][]float64, P)
	for k := range dNodes {
		dNodes[k], dMean[k], dSD[k] = make([]float64, n), make([]float64, n), make([]float64, n)
	}
	r2 := 1 - float64(p.Rho*p.Rho)
	for j, x := range nodes {
		dNodes[0][j] = 1
		dNodes[1][j] = (x - p.Mean) * p.Rho / r2
		dNodes[2][j] = (x - p.Mean) / p.Sigma
	}
	for i, x := range nodes {
		dMean[0][i] = 1
		dMean[1][i] = x - p.Mean + float64(p.Rho*dNodes[1][i])
		dMean[2][i] = float64(p.Rho * dNodes[2][i])
		dSD[2][i] = 1
	}
	sens := &Sensitivity{Params: []string{"mean", "rho", "sigma"}, Grid: dNodes, Transition: make([][]float64, P)}
	for k := range sens.Transition {
		sens.Transition[k] = make([]float64, n*n)
	}
	scalarRowSens(nodes, law, L, c.Transition, keep, dNodes, dMean, dSD, sens.Transition)
	if st, ok := p.Shock.(Standardized); ok {
		if t, ok := st.Base.(StudentT); ok {
			// The innovation's degrees of freedom: a shape parameter.
			sens.Params = append(sens.Params, "innovation.nu")
			sens.Grid = append(sens.Grid, make([]float64, n))
			d := make([]float64, n*n)
			innovationShapeSens(nodes, law, L, c.Transition, keep, StudentT{Nu: t.Nu, Scale: 1}, d)
			sens.Transition = append(sens.Transition, d)
		}
	}
	if _, sens.Stationary, err = stationaryDeriv(c.Transition, n, sens.Transition); err != nil {
		return nil, nil, err
	}
	return c, sens, nil
}

// innovationShapeSens differentiates the maxent rows of a scalar chain
// along a shape parameter of its standardized innovation, whose unscaled
// law base moves as lawMotion(base)[0] says (Student t: ν). At fixed
// standardized points z the prior log q = log W + log s + log f(s z)
// moves by ds/s + f'/f(s z)·z ds + ∂θ log f(s z), s the base's s.d., and
// every moment function z^k − τ_k by −dτ_k; the points themselves do not
// move, nor does the smooth policy's penalty (the normal law's scales).
// It fills dTrans (m×n).
func innovationShapeSens(nodes []float64, law conditional, L int, trans []float64, keep *rowMultipliers, base Distribution, dTrans []float64) {
	params, score, err := lawMotion(base)
	if err != nil {
		panic("solver: innovationShapeSens on a law without motion")
	}
	prm := params[0]
	sd := base.StdDev()
	n, m := len(nodes), len(law.Mean)
	targets := shockTargets(law.Shock, L)
	z, dev, dlogq, dDev := make([]float64, n), make([]float64, n*L), make([]float64, n), make([]float64, n*L)
	for j := range dDev {
		dDev[j] = -prm.dStd(j%L + 1)
	}
	for i := 0; i < m; i++ {
		if keep.mirror[i] >= 0 {
			continue
		}
		for j, x := range nodes {
			z[j] = (x - law.Mean[i]) / law.SD[i]
			u := float64(sd * z[j])
			dlogq[j] = prm.dSD/sd + float64(score(u)*z[j]*prm.dSD) + prm.dLogPdf(u)
		}
		genericRowSens(trans[i*n:(i+1)*n], keep.lam[i], keep.regH[i], z, targets, dev, dlogq, dDev, L, dTrans[i*n:(i+1)*n])
	}
	for i := 0; i < m; i++ {
		if k := keep.mirror[i]; k >= 0 {
			mirrorRow(dTrans[i*n:(i+1)*n], dTrans[k*n:(k+1)*n])
		}
	}
}
