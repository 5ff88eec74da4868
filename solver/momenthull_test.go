package solver

import (
	"encoding/json"
	"fmt"
	"math/rand/v2"
	"testing"
)

// The exact hull test (Gale's evenness condition on the cyclic polytope)
// against linear programming with scipy.optimize.linprog (HiGHS): the
// targets are interior iff some distribution with every weight ≥ ε > 0
// matches them, i.e. iff max ε > 0. Cases whose LP optimum is within 1e-7 of
// zero sit on the boundary up to the LP's tolerance and are not compared.
func TestPowerMomentsFeasibleAgainstLinearProgram(t *testing.T) {
	type problem struct {
		Z, T []float64
	}
	rng := rand.New(rand.NewPCG(7, 11))
	var cases []problem
	for k := 0; k < 120; k++ {
		n := 3 + rng.IntN(9)
		L := 1 + rng.IntN(min(4, n-1))
		z := make([]float64, n)
		x := -2 - 2*rng.Float64()
		for j := range z {
			x += 0.2 + 1.5*rng.Float64()
			z[j] = x
		}
		// Targets: moments of a random law shifted a little, so that some
		// fall outside the hull.
		mu, sd := rng.NormFloat64(), 0.3+rng.Float64()
		tg := make([]float64, L)
		for m := 1; m <= L; m++ {
			// E[(mu + sd·Z)^m] for standard normal Z.
			var s float64
			for i := 0; i <= m; i += 2 {
				s += binomial(m, i) * pow(mu, m-i) * pow(sd, i) * normalStdMoment(i)
			}
			tg[m-1] = s
		}
		cases = append(cases, problem{z, tg})
	}
	in, _ := json.Marshal(cases)
	var eps []float64
	scipyEval(t, fmt.Sprintf(`from scipy.optimize import linprog
cases = json.loads(%q)
out = []
for c in cases:
    z, t = np.array(c["Z"]), np.array(c["T"]); n, L = len(z), len(t)
    # variables p_1..p_n, eps; maximise eps
    cost = np.zeros(n + 1); cost[-1] = -1
    A_eq = np.zeros((L + 1, n + 1)); b_eq = np.zeros(L + 1)
    A_eq[0, :n] = 1; b_eq[0] = 1
    for k in range(L):
        A_eq[k + 1, :n] = z ** (k + 1); b_eq[k + 1] = t[k]
    A_ub = np.hstack([-np.eye(n), np.ones((n, 1))]); b_ub = np.zeros(n)
    r = linprog(cost, A_ub=A_ub, b_ub=b_ub, A_eq=A_eq, b_eq=b_eq, bounds=[(None, None)] * (n + 1), method="highs")
    out.append(float(-r.fun) if r.status == 0 else -1.0)
print(json.dumps(out))`, string(in)), &eps)
	compared, inside := 0, 0
	for k, c := range cases {
		if eps[k] > -1e-7 && eps[k] < 1e-7 {
			continue
		}
		got, decided := powerMomentsFeasible(c.Z, c.T)
		if !decided {
			t.Fatalf("case %d undecided on a small grid", k)
		}
		if want := eps[k] > 0; got != want {
			t.Errorf("case %d (n=%d, L=%d): hull test says %v, LP margin %.3g", k, len(c.Z), len(c.T), got, eps[k])
		}
		compared++
		if got {
			inside++
		}
	}
	if compared < 80 || inside < 10 || compared-inside < 10 {
		t.Errorf("too few informative cases: %d compared, %d inside", compared, inside)
	}
}

func pow(x float64, k int) float64 {
	r := 1.0
	for i := 0; i < k; i++ {
		r *= x
	}
	return r
}
