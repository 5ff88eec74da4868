package solver

import (
	"fmt"
	"math"
	"slices"
	"testing"
)

// The cases that issue 10 reported under "Why", as regression tests. Each
// pins the level matched in every state and checks it against what the
// linear-programming arbiter (scipy's HiGHS, see lparbiter_test.go) finds
// achievable: the highest ladder level that some row with every
// probability ≥ 1e-8 matches. A state must reach at least that level (it
// may exceed it: the maximum-entropy row can carry a level whose rows all
// need a probability below 1e-8 somewhere).
func TestWhyCasesAgainstLP(t *testing.T) {
	type caseT struct {
		name   string
		chain  *Chain
		ladder []int
		devAt  func(i, l int) []float64
		cols   func(l int) int
		want   []int
	}
	var cases []caseT
	for _, c := range []struct {
		rho  float64
		n, L int
		g    NodeRule
		want []int
	}{
		// Was the identity matrix: 0 or 1 moments in every state.
		{0.995, 5, 4, NodesLattice, []int{2, 2, 2, 2, 2}},
		{0.995, 9, 4, NodesGaussHermite, []int{1, 1, 1, 2, 2, 2, 1, 1, 1}},
		{0.99, 5, 4, NodesLattice, []int{2, 2, 2, 2, 2}},
		{0.99, 9, 4, NodesLattice, []int{2, 2, 2, 2, 2, 2, 2, 2, 2}},
		{0.99, 5, 4, NodesGaussHermite, []int{1, 2, 2, 2, 1}},
		{0.99, 9, 4, NodesGaussHermite, []int{1, 1, 1, 2, 2, 2, 1, 1, 1}},
		{0.99, 5, 4, NodesGaussLegendre, []int{2, 2, 2, 2, 2}},
		{0.99, 9, 4, NodesGaussLegendre, []int{2, 2, 2, 2, 2, 2, 2, 2, 2}},
		{0.99, 5, 4, NodesEqualMass, []int{2, 2, 2, 2, 2}},
		{0.99, 9, 4, NodesEqualMass, []int{2, 2, 2, 2, 2, 2, 2, 2, 2}},
		// Mirror states treated differently: was [1 2 2 2 2 2 2 2 2].
		{0.99, 9, 2, NodesLattice, []int{2, 2, 2, 2, 2, 2, 2, 2, 2}},
		// Exited 1 with +Inf in the JSON.
		{0.999, 9, 4, NodesGaussHermite, []int{1, 1, 1, 2, 2, 2, 1, 1, 1}},
	} {
		p := AR1{Rho: c.rho, Sigma: 0.1}
		ch, err := p.Discretize(Settings{States: c.n, Moments: c.L, Nodes: c.g})
		if err != nil {
			t.Fatal(err)
		}
		cases = append(cases, caseT{fmt.Sprintf("ar1 rho=%g N=%d L=%d %s", c.rho, c.n, c.L, c.g), ch, fallbackLadder(c.L),
			func(i, l int) []float64 { return ar1Deviations(p, ch, i, l) }, func(l int) int { return l }, c.want})
	}
	// Was: states 1–3 matched the mean only (principal axes), and states 0
	// and 24 (coordinate axes).
	for _, v := range []struct {
		axes Axes
		want []int
	}{
		{AxesPrincipal, []int{1, 2, 2, 2, 1, 1, 2, 2, 2, 1, 1, 2, 2, 2, 1, 1, 2, 2, 2, 1, 1, 2, 2, 2, 1}},
		{AxesCoordinate, []int{2, 1, 1, 1, 1, 1, 2, 2, 1, 1, 1, 2, 2, 2, 1, 1, 1, 2, 2, 1, 1, 1, 1, 1, 2}},
	} {
		s := Settings{States: 5, Axes: v.axes}
		ch, err := varPersistent.Discretize(s)
		if err != nil {
			t.Fatal(err)
		}
		cases = append(cases, caseT{"var persistent N=5 " + v.axes.String(), ch, vectorLadder(2),
			func(i, l int) []float64 { return varDeviations(varPersistent, s, i, l) },
			func(l int) int { return vectorMomentCount(l, 2) }, v.want})
	}
	var probs []lpProblem
	type ref struct{ c, i, l int }
	var refs []ref
	for ci, c := range cases {
		if !slices.Equal(c.chain.Matched, c.want) {
			t.Errorf("%s: matched %v, want %v", c.name, c.chain.Matched, c.want)
		}
		for i := range c.chain.Matched {
			for _, l := range c.ladder {
				probs = append(probs, lpProblem{Name: fmt.Sprintf("%s state %d level %d", c.name, i, l), N: c.chain.States(), L: c.cols(l), Dev: c.devAt(i, l)})
				refs = append(refs, ref{ci, i, l})
			}
		}
	}
	floors := lpFloors(t, probs)
	achievable := make(map[[2]int]int)
	for k, f := range floors {
		r := refs[k]
		if f >= lpFloor {
			key := [2]int{r.c, r.i}
			achievable[key] = max(achievable[key], r.l)
		}
	}
	for ci, c := range cases {
		lp := make([]int, c.chain.States())
		for i := range lp {
			lp[i] = achievable[[2]int{ci, i}]
			if c.chain.Matched[i] < lp[i] {
				t.Errorf("%s state %d: matched %d, the LP achieves level %d", c.name, i, c.chain.Matched[i], lp[i])
			}
		}
		t.Logf("%s: matched %v, LP-achievable at floor 1e-8 %v", c.name, c.chain.Matched, lp)
	}
}

// TestMirrorSymmetry checks symmetry by construction: on symmetric
// innovations and grids, row N−1−i reversed equals row i to 1e-14 (by
// construction the rows are copies, so the difference is exactly 0), and
// for a VAR reflection through the mean maps state i to N^d−1−i.
func TestMirrorSymmetry(t *testing.T) {
	const tol = 1e-14 // issue 10's bound; copies differ by 0
	mirrored := func(t *testing.T, c *Chain) {
		t.Helper()
		n := c.States()
		for i := 0; i < n; i++ {
			for j := 0; j < n; j++ {
				a, b := c.Transition[i*n+j], c.Transition[(n-1-i)*n+(n-1-j)]
				if math.Abs(a-b) > tol {
					t.Fatalf("P[%d][%d] = %.17g but P[%d][%d] = %.17g", i, j, a, n-1-i, n-1-j, b)
				}
			}
			if c.Matched[i] != c.Matched[n-1-i] || c.Certificate(i) != c.Certificate(n-1-i) {
				t.Fatalf("state %d matched %d (%s), its mirror %d (%s)", i, c.Matched[i], c.Certificate(i), c.Matched[n-1-i], c.Certificate(n-1-i))
			}
		}
	}
	for _, sh := range lpShocks {
		if sh.name == "mixture" {
			continue // skewed
		}
		for g := NodesLattice; g <= NodesEqualMass; g++ {
			for _, rho := range []float64{0.5, 0.95, 0.99} {
				for _, n := range []int{8, 9, 21} {
					t.Run(fmt.Sprintf("%s/%s/rho=%g/N=%d", sh.name, g, rho, n), func(t *testing.T) {
						c, err := AR1{Rho: rho, Sigma: 0.1, Shock: sh.shock}.Discretize(Settings{States: n, Moments: 4, Nodes: g})
						if err != nil {
							t.Fatal(err)
						}
						mirrored(t, c)
					})
				}
			}
		}
	}
	for _, p := range []VAR{varPersistent, varModerate, varThree} {
		for _, n := range []int{4, 5} {
			c, err := p.Discretize(Settings{States: n})
			if err != nil {
				t.Fatal(err)
			}
			mirrored(t, c)
		}
	}
	d, err := IID{Dist: Normal{Mu: 1, Sigma: 2}}.Discretize(Settings{States: 9})
	if err != nil {
		t.Fatal(err)
	}
	for j := range d.Weights {
		if d.Weights[j] != d.Weights[len(d.Weights)-1-j] {
			t.Fatalf("i.i.d. normal weights not symmetric: %v", d.Weights)
		}
	}
}
