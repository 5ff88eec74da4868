package figures

import (
	"bytes"
	"math"
	"strings"
	"testing"

	"gridstage/solver"
)

// A life-cycle product (persistent part z plus transitory part e) is drawn
// by the sum of its coordinates: the mass at every age sits at z_i + e_k,
// and the chain's mean at age t is the sum of the components' means (the
// persistent part's pushed-forward mean plus the transitory part's mean
// 0.05), to 1e-12. The age axis is in model periods, with the length of a
// period when it is known.
func TestAgesFigureOfALifeCycleProduct(t *testing.T) {
	lc := solver.LifeCycle{InitialSD: 0.3, Rho: []float64{0.9, 0.95}, Sigma: []float64{0.2, 0.15}}
	ages, err := lc.Discretize(solver.Settings{States: 5, Method: solver.Rouwenhorst})
	if err != nil {
		t.Fatal(err)
	}
	d, err := solver.IID{Dist: solver.Normal{Mu: 0.05, Sigma: 0.1}}.Discretize(solver.Settings{States: 3, Moments: 2, Nodes: solver.NodesGaussHermite})
	if err != nil {
		t.Fatal(err)
	}
	a, err := solver.ProductAges(solver.AgePart{Ages: ages}, solver.AgePart{Chain: d.Chain()})
	if err != nil {
		t.Fatal(err)
	}
	l := LifeCycle{Label: "income", Ages: []float64{0, 1, 2}, Chains: a.Ages, Final: a.Final, Initial: a.Initial, YearsPerPeriod: 3}
	am, err := AgeMassOf(l)
	if err != nil {
		t.Fatal(err)
	}
	if len(am.Level) != 3*15 {
		t.Fatalf("%d points, want 45", len(am.Level))
	}
	for s := 0; s < 15; s++ {
		if want := ages.Grid(2)[s/3] + d.Nodes[s%3]; am.Level[30+s] != want {
			t.Errorf("age 2 state %d drawn at %v, want z + e = %v", s, am.Level[30+s], want)
		}
	}
	marg := ages.Marginals()
	for age := range marg {
		var mz float64
		for i, p := range marg[age] {
			mz += p * ages.Grid(age)[i]
		}
		if math.Abs(am.Mean[age]-(mz+0.05)) > 1e-12 {
			t.Errorf("age %d: mean %.15g, want %.15g", age, am.Mean[age], mz+0.05)
		}
	}
	f, err := ForLifeCycle(l)
	if err != nil {
		t.Fatal(err)
	}
	var svg bytes.Buffer
	if err := f.Encode(&svg, SVG); err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{"age (model period; one period = 3 years)", "sum of the coordinates, x0 + x1"} {
		if !strings.Contains(svg.String(), want) {
			t.Errorf("the figure lacks %q", want)
		}
	}
	if strings.Contains(svg.String(), "age (years)") {
		t.Error("the figure labels model periods as years")
	}
}
