package solver

import "gridstage/internal/portablemath"

// FlodenWeight is the weight Flodén (2008) puts on the innovation s.d. in
// the base s.d. of Tauchen-Hussey quadrature: σ_b = w σ_ε + (1−w) σ_y with
// w = 1/2 + ρ/4.
func FlodenWeight(rho float64) float64 { return 0.5 + rho/4 }

// tauchenHusseyRows fills trans with Tauchen and Hussey (1991) probabilities
// on Gauss-Hermite nodes x_j = μ + √2 σ_b ξ_j:
//
//	p_ij ∝ ω_j f(x_j | x_i) / φ(x_j; μ, σ_b),
//
// computed in log space.
func tauchenHusseyRows(nodes, logOmega []float64, mu, sdBase float64, law conditional, trans []float64) {
	n := len(nodes)
	logq := make([]float64, n)
	for i := 0; i < n; i++ {
		m, s := law.Mean[i], law.SD[i]
		for j, x := range nodes {
			z := (x - m) / s
			var lf float64
			if law.Shock == nil {
				lf = float64(-0.5 * z * z)
			} else {
				lf = law.Shock.LogProb(z)
			}
			zb := (x - mu) / sdBase
			logq[j] = logOmega[j] + lf - portablemath.Log(s) + float64(0.5*zb*zb) + portablemath.Log(sdBase)
		}
		priorRow(logq, trans[i*n:(i+1)*n])
	}
}
