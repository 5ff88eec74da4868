package solver

import "fmt"

// ProductSensitivities returns the derivatives of Product(parts...) with
// respect to every parameter of every component, given each component's
// own (sens[i], for parts[i]), the parameters prefixed with prefix[i].
// A component's parameter moves only its own factor:
//
//	dP = P₁ ⊗ … ⊗ dPᵢ ⊗ … ⊗ P_m,   dπ = π₁ ⊗ … ⊗ dπᵢ ⊗ … ⊗ π_m,
//
// and only its own coordinates of the grid. The components' stationary
// laws π_j are computed here (Stationary).
func ProductSensitivities(parts []*Chain, sens []*Sensitivity, prefix []string) (*Sensitivity, error) {
	if len(parts) == 0 || len(sens) != len(parts) || len(prefix) != len(parts) {
		panic("solver: ProductSensitivities shape mismatch")
	}
	pis := make([][]float64, len(parts))
	for i, c := range parts {
		pi, err := Stationary(c.Transition, c.States())
		if err != nil {
			return nil, fmt.Errorf("component %d: %w", i, err)
		}
		pis[i] = pi
	}
	acc := &Sensitivity{}
	accChain, accPi := parts[0], pis[0]
	for k, name := range sens[0].Params {
		acc.Params = append(acc.Params, prefix[0]+name)
		acc.Grid = append(acc.Grid, sens[0].Grid[k])
		acc.Transition = append(acc.Transition, sens[0].Transition[k])
		acc.Stationary = append(acc.Stationary, sens[0].Stationary[k])
	}
	for i := 1; i < len(parts); i++ {
		b, sb := parts[i], sens[i]
		na, nb := accChain.States(), b.States()
		zeroA, zeroB := make([]float64, na*accChain.Dim), make([]float64, nb*b.Dim)
		next := &Sensitivity{}
		for k, name := range acc.Params {
			next.Params = append(next.Params, name)
			next.Grid = append(next.Grid, outerGrid(acc.Grid[k], accChain.Dim, zeroB, b.Dim))
			next.Transition = append(next.Transition, kronMatrix(acc.Transition[k], na, b.Transition, nb))
			next.Stationary = append(next.Stationary, outerLaw(acc.Stationary[k], pis[i]))
		}
		for k, name := range sb.Params {
			next.Params = append(next.Params, prefix[i]+name)
			next.Grid = append(next.Grid, outerGrid(zeroA, accChain.Dim, sb.Grid[k], b.Dim))
			next.Transition = append(next.Transition, kronMatrix(accChain.Transition, na, sb.Transition[k], nb))
			next.Stationary = append(next.Stationary, outerLaw(accPi, sb.Stationary[k]))
		}
		accChain, accPi, acc = kron(accChain, b), outerLaw(accPi, pis[i]), next
	}
	return acc, nil
}

// kronMatrix returns A ⊗ B for the na×na matrix a and the nb×nb matrix b,
// row-major, state (i, k) numbered i·nb + k as kron numbers them.
func kronMatrix(a []float64, na int, b []float64, nb int) []float64 {
	n := na * nb
	out := make([]float64, n*n)
	for i := 0; i < na; i++ {
		for k := 0; k < nb; k++ {
			row := out[(i*nb+k)*n : (i*nb+k+1)*n]
			for j := 0; j < na; j++ {
				p := a[i*na+j]
				for m := 0; m < nb; m++ {
					row[j*nb+m] = float64(p * b[k*nb+m])
				}
			}
		}
	}
	return out
}
