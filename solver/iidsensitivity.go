package solver

import (
	"fmt"
	"math"

	"gridstage/internal/portablemath"
)

// lawParam is one parameter θ of an i.i.d. law and how the law moves with
// it: its mean and standard deviation, its log density at a fixed point
// (up to an additive constant, which the maximum-entropy rows ignore),
// and its standardized moments. shape marks a parameter that changes the
// standardized law (a degree of freedom, a log-scale), not only its
// location and scale.
type lawParam struct {
	name       string
	dMean, dSD float64
	dLogPdf    func(x float64) float64 // ∂θ log f(x; θ) at fixed x
	dStd       func(k int) float64     // ∂θ of the k-th standardized moment
	shape      bool
}

// lawMotion returns the parameters of dist with their motions and the
// law's score ∂x log f, or an error naming the law for laws without
// them here.
func lawMotion(dist Distribution) ([]lawParam, func(x float64) float64, error) {
	zero := func(int) float64 { return 0 }
	switch d := dist.(type) {
	case Normal:
		v := float64(d.Sigma * d.Sigma)
		return []lawParam{
			{name: "mean", dMean: 1, dLogPdf: func(x float64) float64 { return (x - d.Mu) / v }, dStd: zero},
			{name: "sd", dSD: 1, dLogPdf: func(x float64) float64 { u := x - d.Mu; return -1/d.Sigma + u*u/(v*d.Sigma) }, dStd: zero},
		}, d.Score, nil
	case Laplace:
		sign := func(x float64) float64 {
			switch {
			case x > d.Loc:
				return 1
			case x < d.Loc:
				return -1
			}
			return 0
		}
		return []lawParam{
				{name: "location", dMean: 1, dLogPdf: func(x float64) float64 { return sign(x) / d.Scale }, dStd: zero},
				{name: "scale", dSD: math.Sqrt2, dLogPdf: func(x float64) float64 { return -1/d.Scale + math.Abs(x-d.Loc)/(d.Scale*d.Scale) }, dStd: zero},
			}, func(x float64) float64 {
				return -sign(x) / d.Scale
			}, nil
	case StudentT:
		nu, s := d.Nu, d.Scale
		g := func(x float64) (u, r float64) { u = (x - d.Loc) / s; return u, 1 + u*u/nu }
		root := math.Sqrt(nu / (nu - 2))
		return []lawParam{
			{name: "nu", dSD: float64(s / (2 * root) * (-2 / ((nu - 2) * (nu - 2)))), shape: true,
				dLogPdf: func(x float64) float64 {
					u, r := g(x)
					return -portablemath.Log(r)/2 + (nu+1)/2*u*u/(nu*nu*r)
				},
				// E z^k = (ν−2)^{k/2−1} Π_{i=2}^{k/2} (2i−1)/(ν−2i) for even
				// k < ν (standardized Student t; odd moments vanish).
				dStd: func(k int) float64 {
					if k%2 == 1 || k <= 2 {
						return 0
					}
					m, _ := d.StdMoment(k)
					dlog := float64(k/2-1) / (nu - 2)
					for i := 2; i <= k/2; i++ {
						dlog -= 1 / (nu - float64(2*i))
					}
					return float64(m * dlog)
				}},
			{name: "location", dMean: 1, dStd: zero, dLogPdf: func(x float64) float64 {
				u, r := g(x)
				return (nu + 1) * u / (s * nu * r)
			}},
			{name: "scale", dSD: root, dStd: zero, dLogPdf: func(x float64) float64 {
				u, r := g(x)
				return -1/s + (nu+1)*u*u/(s*nu*r)
			}},
		}, d.Score, nil
	case LogNormal:
		mu, sg := d.Mu, d.Sigma
		m, sd := d.Mean(), d.StdDev()
		w := portablemath.Exp(float64(sg * sg))
		em1 := portablemath.Expm1(float64(sg * sg))
		score := func(x float64) float64 { return -1/x - (portablemath.Log(x)-mu)/(sg*sg*x) }
		return []lawParam{
			{name: "log_mean", dMean: m, dSD: sd, dStd: zero,
				dLogPdf: func(x float64) float64 { return (portablemath.Log(x) - mu) / (sg * sg) }},
			{name: "log_sd", dMean: float64(sg * m), dSD: float64(sg*sd) + m*sg*w/math.Sqrt(em1), shape: true,
				dLogPdf: func(x float64) float64 { y := portablemath.Log(x) - mu; return -1/sg + y*y/(sg*sg*sg) },
				// The k-th standardized moment is c_k/(e^{σ²}−1)^{k/2}, c_k
				// the central moment of Y = X/EX, whose raw moments are
				// r_j = exp(j(j−1)σ²/2) (see LogNormal.StdMoment).
				dStd: func(k int) float64 {
					if k <= 2 {
						return 0
					}
					var c, dc float64
					for j := 0; j <= k; j++ {
						sign := 1.0
						if (k-j)%2 == 1 {
							sign = -1
						}
						jj := float64(j)
						r := portablemath.Exp(jj * (jj - 1) * sg * sg / 2)
						b := binomial(k, j)
						c += float64(sign * b * r)
						dc += float64(sign * b * jj * (jj - 1) * sg * r)
					}
					den := portablemath.Pow(em1, float64(k)/2)
					return dc/den - float64(k)/2*c/den*(2*sg*w)/em1
				}},
		}, score, nil
	}
	name := fmt.Sprintf("%T", dist)
	switch dist.(type) {
	case Beta:
		name = "beta"
	case Mixture:
		name = "mixture"
	}
	return nil, nil, fmt.Errorf("%w: the law is %s", ErrNoSensitivities, name)
}

// Sensitivities builds the i.i.d. chain as Discretize does (every row the
// discrete law's weights, as Discrete.Chain) and its derivatives with
// respect to the law's parameters, named as a manifest sweep names them
// (distribution.mean, distribution.sd; distribution.log_mean,
// distribution.log_sd; distribution.nu, .location, .scale;
// distribution.location, .scale), by the implicit differentiation
// described at Sensitivity. The points move with the law's mean and
// standard deviation (and, for a log-normal on Gauss-Hermite nodes in
// logs, with μ and σ of the logs); the prior moves with the log density,
// the targets with the standardized moments (the smooth policy's penalty
// does not: its scales are the normal law's). The stationary law of an
// i.i.d. chain is its row, so its derivative is the weights'. It returns
// an error wrapping ErrNoSensitivities for other laws (beta, mixture), and
// for shape parameters on equal-mass nodes (quantiles of the law itself).
func (p IID) Sensitivities(s Settings) (*Chain, *Sensitivity, error) {
	params, score, err := lawMotion(p.Dist)
	if err != nil {
		return nil, nil, err
	}
	d, err := p.Discretize(s)
	if err != nil {
		return nil, nil, err
	}
	n := len(d.Nodes)
	L := d.Moments
	mean, sd := p.Dist.Mean(), p.Dist.StdDev()
	lo, hi := p.Dist.Support()
	width := s.Width
	if width == 0 {
		width = DefaultWidth(n)
	}
	a, b := math.Max(lo, mean-float64(width*sd)), math.Min(hi, mean+float64(width*sd))
	_, isLogNormal := p.Dist.(LogNormal)
	clipped := a > mean-float64(width*sd) || b < mean+float64(width*sd)

	// Multipliers of the one row, as Discretize solved it.
	shock := Standardized{p.Dist}
	law := conditional{Mean: []float64{mean}, SD: []float64{sd}, Shock: shock}
	row := make([]float64, n)
	keep := &rowMultipliers{}
	logW := iidLogWeights(p, s, d.Nodes)
	maxentRowsKeep(d.Nodes, logW, law, L, s.Matching, row, []int{0}, []Certificate{CertNone}, keep)
	for j := range row {
		if row[j] != d.Weights[j] {
			return nil, nil, fmt.Errorf("solver: internal: the i.i.d. row rebuilt for its sensitivities differs at point %d", j)
		}
	}

	c := d.Chain()
	sens := &Sensitivity{}
	targets := shockTargets(shock, L)
	for _, prm := range params {
		if prm.shape && s.Nodes == NodesEqualMass {
			return nil, nil, fmt.Errorf("%w: %s of this law on equal-mass nodes (the quantiles move with the shape; use lattice or gauss-legendre nodes)", ErrNoSensitivities, prm.name)
		}
		dx, dlogW := make([]float64, n), make([]float64, n)
		switch {
		case s.Nodes == NodesGaussHermite && isLogNormal:
			// x_j = exp(μ + √2σ ξ_j); log W_j = … + log(√2σ) + y_j.
			ln := p.Dist.(LogNormal)
			for j, x := range d.Nodes {
				xi := (portablemath.Log(x) - ln.Mu) / (math.Sqrt2 * ln.Sigma)
				if prm.name == "log_mean" {
					dx[j], dlogW[j] = x, 1
				} else {
					dx[j], dlogW[j] = float64(math.Sqrt2*xi*x), 1/ln.Sigma+float64(math.Sqrt2*xi)
				}
			}
		case clipped && (s.Nodes == NodesLattice || s.Nodes == NodesGaussLegendre):
			// Points over [a, b], an end held by the support.
			da, db := prm.dMean-float64(width*prm.dSD), prm.dMean+float64(width*prm.dSD)
			if a > mean-float64(width*sd) {
				da = 0
			}
			if b < mean+float64(width*sd) {
				db = 0
			}
			for j, x := range d.Nodes {
				dx[j] = da + (db-da)*(x-a)/(b-a)
			}
		default:
			// x_j = mean + sd a_j; an equal-mass prior −log f(x_j) + const.
			for j, x := range d.Nodes {
				dx[j] = prm.dMean + prm.dSD*(x-mean)/sd
				if s.Nodes == NodesEqualMass {
					dlogW[j] = -(float64(score(x)*dx[j]) + prm.dLogPdf(x))
				}
			}
		}
		// The row's inputs in standardized units (see maxentRows): z_j =
		// (x_j − mean)/sd, log q_j = log W_j + log sd + log f(x_j), and
		// the moment functions z^k − τ_k.
		dlogq, dDev := make([]float64, n), make([]float64, n*L)
		for j, x := range d.Nodes {
			z := (x - mean) / sd
			dz := (dx[j] - prm.dMean - float64(z*prm.dSD)) / sd
			dlogq[j] = dlogW[j] + prm.dSD/sd + float64(score(x)*dx[j]) + prm.dLogPdf(x)
			pow := 1.0 // z^{k−1}
			for k := 1; k <= L; k++ {
				dDev[j*L+k-1] = float64(float64(k)*pow*dz) - prm.dStd(k)
				pow = float64(pow * z)
			}
		}
		dev := make([]float64, n*L)
		z := make([]float64, n)
		for j, x := range d.Nodes {
			z[j] = (x - mean) / sd
		}
		var lam, regH []float64 // none with moments 0: the prior row
		if len(keep.lam) > 0 {
			lam, regH = keep.lam[0], keep.regH[0]
		}
		dRow := make([]float64, n)
		genericRowSens(row, lam, regH, z, targets, dev, dlogq, dDev, L, dRow)
		dTrans := make([]float64, n*n)
		for i := 0; i < n; i++ {
			copy(dTrans[i*n:(i+1)*n], dRow)
		}
		sens.Params = append(sens.Params, "distribution."+prm.name)
		sens.Grid = append(sens.Grid, dx)
		sens.Transition = append(sens.Transition, dTrans)
		sens.Stationary = append(sens.Stationary, dRow)
	}
	return c, sens, nil
}

// iidLogWeights returns the log prior weights IID.Discretize gave its
// points (its node placement, recomputed).
func iidLogWeights(p IID, s Settings, nodes []float64) []float64 {
	n := len(nodes)
	mean, sd := p.Dist.Mean(), p.Dist.StdDev()
	lo, hi := p.Dist.Support()
	bounded := !math.IsInf(lo, -1) && !math.IsInf(hi, 1)
	width := s.Width
	if width == 0 {
		width = DefaultWidth(n)
	}
	a, b := math.Max(lo, mean-float64(width*sd)), math.Min(hi, mean+float64(width*sd))
	if bounded && s.Width == 0 {
		a, b = lo, hi
	}
	ln, isLogNormal := p.Dist.(LogNormal)
	switch {
	case s.Nodes == NodesGaussHermite && isLogNormal:
		_, logW := logHermiteGrid(n, ln.Mu, ln.Sigma)
		return logW
	case s.Nodes == NodesLattice && (a > mean-float64(width*sd) || b < mean+float64(width*sd)):
		logW := make([]float64, n)
		for j := range logW {
			logW[j] = portablemath.Log((b - a) / float64(n))
		}
		return logW
	case s.Nodes == NodesGaussLegendre:
		r := GaussLegendre(n, a, b)
		logW := make([]float64, n)
		for j, w := range r.Weights {
			logW[j] = portablemath.Log(w)
		}
		return logW
	}
	_, logW := placeGrid(s.Nodes, n, mean, sd, width, p.Dist)
	return logW
}

// genericRowSens differentiates one maxent row p (multipliers lam, the
// smooth policy's penalty curvature regH or nil) whose moment functions
// are z^k − targets_k, given the motion of its log prior (dlogq) and of
// its moment functions (dDev, n×L; the row's level uses the first
// len(lam) of them). The smooth policy's penalty does not move: its
// scales are the normal law's (stateProblem.penaltyScale). See
// Sensitivity.
func genericRowSens(p, lam, regH, z, targets, dev, dlogq, dDev []float64, L int, out []float64) {
	n := len(p)
	cols := len(lam)
	abar := make([]float64, n)
	var ebar float64
	for j := 0; j < n; j++ {
		a := dlogq[j]
		for k := 0; k < cols; k++ {
			a += float64(lam[k] * dDev[j*L+k])
		}
		abar[j] = a
		ebar += float64(p[j] * a)
	}
	if cols > 0 {
		fillDeviations(z, targets[:cols], dev[:n*cols])
		grad, hess, chol, dlam := make([]float64, cols), make([]float64, cols*cols), make([]float64, cols*cols), make([]float64, cols)
		covariance(p, dev[:n*cols], cols, grad, hess)
		for k := 0; k < cols && regH != nil; k++ {
			hess[k*cols+k] += regH[k]
		}
		if !cholesky(hess, chol, cols) {
			regularizeCholesky(hess, chol, cols)
		}
		clear(grad)
		for j := 0; j < n; j++ {
			w := float64(p[j] * (abar[j] - ebar))
			for k := 0; k < cols; k++ {
				grad[k] += float64(w*dev[j*cols+k]) + float64(p[j]*dDev[j*L+k])
			}
		}
		cholSolve(chol, cols, grad, dlam)
		ebar = 0
		for j := 0; j < n; j++ {
			var s float64
			for k := 0; k < cols; k++ {
				s += float64(dlam[k] * dev[j*cols+k])
			}
			abar[j] -= s
			ebar += float64(p[j] * abar[j])
		}
	}
	for j := 0; j < n; j++ {
		if p[j] == 0 {
			out[j] = 0
			continue
		}
		out[j] = float64(p[j] * (abar[j] - ebar))
	}
}
