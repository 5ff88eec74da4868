package solver

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// Static laws on their support: a beta law's grid covers [lo, hi] and a
// lognormal may take Gauss-Hermite nodes in logs. The discrete laws'
// mean, variance, skewness and excess kurtosis are checked against
// scipy.stats at test time, and the nodes against numpy's Gauss-Hermite
// rule (numpy.polynomial.hermite.hermgauss). Tolerance 1e-10 relative or
// absolute: the moments are matched to the solver's tolerance (matchTol),
// and both sides evaluate closed forms.
func TestIIDOnSupportAgainstScipy(t *testing.T) {
	var ref struct {
		Beta, BetaShifted, LogNormal [4]float64
		Hermite                      []float64
	}
	scipyEval(t, `from scipy import stats
mvsk = lambda d: [float(x) for x in d.stats(moments="mvsk")]
z, _ = np.polynomial.hermite.hermgauss(5)
print(json.dumps({"Beta": mvsk(stats.beta(2, 5)), "BetaShifted": mvsk(stats.beta(2, 5, loc=0.1, scale=0.8)),
    "LogNormal": mvsk(stats.lognorm(s=0.5, scale=np.exp(0.1))), "Hermite": [float(x) for x in z]}))`, &ref)

	check := func(name string, d *Discrete, want [4]float64) {
		t.Helper()
		if d.Matched != 4 {
			t.Errorf("%s: matched %d of 4 moments", name, d.Matched)
		}
		m := WeightedMoments(d.Weights, d.Nodes)
		got := [4]float64{m.Mean, m.Var, m.Skew, m.Kurt - 3}
		for k := range got {
			if !scalar.EqualWithinAbsOrRel(got[k], want[k], 1e-10, 1e-10) {
				t.Errorf("%s moment %d: discrete %.15g, scipy %.15g", name, k+1, got[k], want[k])
			}
		}
	}

	// Beta(2, 5) on [0, 1] with 5 states (the case that had a grid on
	// 0.06–0.545 and 2 moments): Gauss-Legendre nodes on the support.
	d, err := IID{Dist: Beta{Alpha: 2, Beta: 5}}.Discretize(Settings{States: 5, Moments: 4, Nodes: NodesGaussLegendre})
	if err != nil {
		t.Fatal(err)
	}
	gl := GaussLegendre(5, 0, 1)
	for j, x := range d.Nodes {
		if x != gl.Nodes[j] {
			t.Errorf("beta node %d = %v, want the Gauss-Legendre node on [0, 1] %v", j, x, gl.Nodes[j])
		}
	}
	if d.Nodes[0] > 0.05 || d.Nodes[4] < 0.95 {
		t.Errorf("beta grid %v does not reach across [0, 1]", d.Nodes)
	}
	check("beta(2,5)", d, ref.Beta)

	// The lattice on a bounded support takes the midpoints of equal cells
	// of the whole support.
	d, err = IID{Dist: Beta{Alpha: 2, Beta: 5, Lo: 0.1, Hi: 0.9}}.Discretize(Settings{States: 8, Moments: 4, Nodes: NodesLattice})
	if err != nil {
		t.Fatal(err)
	}
	for j, x := range d.Nodes {
		if want := 0.1 + 0.1*(float64(j)+0.5); math.Abs(x-want) > 1e-15 {
			t.Errorf("lattice node %d = %v, want the cell midpoint %v", j, x, want)
		}
	}
	check("beta(2,5) on [0.1, 0.9], lattice", d, ref.BetaShifted)

	// A width narrows the grid again (mean ± width s.d., clipped).
	d, err = IID{Dist: Beta{Alpha: 2, Beta: 5}}.Discretize(Settings{States: 5, Moments: 2, Nodes: NodesLattice, Width: 2})
	if err != nil {
		t.Fatal(err)
	}
	b25 := Beta{Alpha: 2, Beta: 5}
	if hi := b25.Mean() + 2*b25.StdDev(); d.Nodes[4] > hi {
		t.Errorf("with width 2 the last node %v is past the mean + 2 s.d. %v", d.Nodes[4], hi)
	}

	// Lognormal with Gauss-Hermite nodes in logs.
	ln := LogNormal{Mu: 0.1, Sigma: 0.5}
	d, err = IID{Dist: ln}.Discretize(Settings{States: 5, Moments: 4, Nodes: NodesGaussHermite})
	if err != nil {
		t.Fatal(err)
	}
	for j, x := range d.Nodes {
		want := math.Exp(0.1 + math.Sqrt2*0.5*ref.Hermite[j])
		if !scalar.EqualWithinRel(x, want, 1e-13) {
			t.Errorf("lognormal node %d = %.15g, want exp(μ + √2 σ z_%d) = %.15g", j, x, j, want)
		}
	}
	check("lognormal(0.1, 0.5), gauss-hermite in logs", d, ref.LogNormal)
}

// With no moment to match, the prior on Gauss-Hermite nodes in logs is the
// Gauss-Hermite rule itself: weights w_j/√π (numpy's hermgauss weights).
func TestLogHermitePriorIsTheRule(t *testing.T) {
	nodes, logW := logHermiteGrid(7, -0.2, 0.3)
	ln := LogNormal{Mu: -0.2, Sigma: 0.3}
	r := GaussHermite(7)
	for j := range nodes {
		q := math.Exp(logW[j] + ln.LogProb(nodes[j]))
		if want := r.Weights[j] / math.Sqrt(math.Pi); !scalar.EqualWithinRel(q, want, 1e-12) {
			t.Errorf("node %d: prior %.15g, want w/√π = %.15g", j, q, want)
		}
	}
}
