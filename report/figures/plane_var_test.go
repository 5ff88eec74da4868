package figures

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"gridstage/solver"
)

// A maximum-entropy VAR chain that matches every state's conditional mean
// and covariance has, under its stationary law, exactly the covariance Σ
// solving Σ = BΣBᵀ + Ψ. The plane figure's chain axes must therefore be
// the eigenpairs of the discrete Lyapunov solution, computed here by
// scipy.linalg.solve_discrete_lyapunov and numpy.linalg.eigh.
func TestPlaneAxesOfAVARChainMatchLyapunov(t *testing.T) {
	// An invented two-sector productivity process.
	p := solver.VAR{Coef: []float64{0.7, 0.05, 0.1, 0.6}, Cov: []float64{0.01, 0.004, 0.004, 0.02}}
	c, err := p.Discretize(solver.Settings{States: 7, Moments: 2})
	if err != nil {
		t.Fatal(err)
	}
	if k := c.Fallbacks(); k != 0 {
		t.Fatalf("test set-up: %d states fell back; the exactness argument needs none", k)
	}
	pl, err := PlaneOf(Case{Chain: c, Law: Law{Cov: p.StationaryCov(), MeanVec: p.StationaryMean()}})
	if err != nil {
		t.Fatal(err)
	}
	var ref struct {
		Values  []float64   `json:"values"`
		Vectors [][]float64 `json:"vectors"`
	}
	scipyEval(t, `
import json, numpy as np
from scipy.linalg import solve_discrete_lyapunov
B = np.array([[0.7, 0.05], [0.1, 0.6]]); Q = np.array([[0.01, 0.004], [0.004, 0.02]])
S = solve_discrete_lyapunov(B, Q)
w, v = np.linalg.eigh(S)
print(json.dumps({"values": w[::-1].tolist(), "vectors": v[:, ::-1].T.tolist()}))`, &ref)
	for k, ax := range pl.Axes {
		// Tolerance 1e-9 relative: the solver matches conditional moments
		// to about 1e-10 in standardized units, and the stationary
		// covariance inherits that error.
		if !scalar.EqualWithinRel(ax.SD*ax.SD, ref.Values[k], 1e-9) {
			t.Errorf("axis %d: chain variance %.12g, Lyapunov %.12g", k, ax.SD*ax.SD, ref.Values[k])
		}
		dot := ax.Dir[0]*ref.Vectors[k][0] + ax.Dir[1]*ref.Vectors[k][1]
		if math.Abs(math.Abs(dot)-1) > 1e-9 {
			t.Errorf("axis %d: direction %v, Lyapunov %v", k, ax.Dir, ref.Vectors[k])
		}
		if math.Abs(pl.TrueAxes[k].SD-ax.SD) > 1e-9*ax.SD {
			t.Errorf("axis %d: true-axis s.d. %g against chain %g", k, pl.TrueAxes[k].SD, ax.SD)
		}
	}
	if len(pl.X) != 49 {
		t.Errorf("%d states in the plane, want 7×7", len(pl.X))
	}
}
