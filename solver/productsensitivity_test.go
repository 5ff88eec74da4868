package solver

import "testing"

// TestProductSensitivitiesAgainstFiniteDifferences: the derivatives of an
// AR(1) ⊗ i.i.d. product chain (persistent and transitory income) in each
// component's parameters, against central differences of Product itself,
// with the bound of closeDerivatives (1e-6 relative + 1e-8).
func TestProductSensitivitiesAgainstFiniteDifferences(t *testing.T) {
	s1 := Settings{States: 7, Moments: 4, Matching: MatchSmooth}
	s2 := Settings{States: 3, Moments: 2}
	build := func(rho, nu float64) (*Chain, *Chain, *Sensitivity, *Sensitivity) {
		a, sa, err := AR1{Rho: rho, Sigma: 0.1}.Sensitivities(s1)
		if err != nil {
			t.Fatal(err)
		}
		b, sb, err := IID{Dist: StudentT{Nu: nu, Scale: 0.05}}.Sensitivities(s2)
		if err != nil {
			t.Fatal(err)
		}
		return a, b, sa, sb
	}
	a, b, sa, sb := build(0.95, 9)
	sens, err := ProductSensitivities([]*Chain{a, b}, []*Sensitivity{sa, sb}, []string{"components[0].", "components[1]."})
	if err != nil {
		t.Fatal(err)
	}
	want := []string{"components[0].mean", "components[0].rho", "components[0].sigma", "components[1].distribution.nu", "components[1].distribution.location", "components[1].distribution.scale"}
	if len(sens.Params) != len(want) {
		t.Fatalf("params %v, want %v", sens.Params, want)
	}
	for k, name := range want {
		if sens.Params[k] != name {
			t.Fatalf("param %d is %s, want %s", k, sens.Params[k], name)
		}
	}
	at := func(k int, h float64) *Chain {
		rho, nu := 0.95, 9.0
		switch k {
		case 1:
			rho += h
		case 3:
			nu += h
		}
		x, y, _, _ := build(rho, nu)
		return Product(x, y)
	}
	for _, k := range []int{1, 3} {
		closeDerivatives(t, "dP/d"+sens.Params[k], sens.Transition[k], centralDiff(func(h float64) []float64 { return at(k, h).Transition }, 0, 1e-4))
		closeDerivatives(t, "dgrid/d"+sens.Params[k], sens.Grid[k], centralDiff(func(h float64) []float64 { return at(k, h).Grid }, 0, 1e-4))
		closeDerivatives(t, "dpi/d"+sens.Params[k], sens.Stationary[k], centralDiff(func(h float64) []float64 {
			c := at(k, h)
			pi, _ := Stationary(c.Transition, c.States())
			return pi
		}, 0, 1e-4))
	}
}
