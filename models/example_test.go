package models_test

import (
	"fmt"
	"math"

	"gridstage/models"
)

// A two-state chain for dividend growth: slow (−1%) and fast (+3%) years,
// each persisting with probability 0.8.
func ExampleBurnside_PriceDividend() {
	c := models.Chain{Levels: []float64{-0.01, 0.03}, Transition: []float64{0.8, 0.2, 0.2, 0.8}}
	v, err := models.Burnside{Beta: 0.95, Theta: -2}.PriceDividend(c)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("price-dividend ratio: slow %.3f, fast %.3f\n", v[0], v[1])
	// Output: price-dividend ratio: slow 14.877, fast 13.345
}

// Brock-Mirman growth on a one-state chain (z = 1): the grid policy is
// within one grid spacing of the closed form k' = αβk^α.
func ExampleBrockMirman_Solve() {
	m := models.BrockMirman{Alpha: 0.3, Beta: 0.9, Capital: 101}
	g, err := m.Solve(models.Chain{Levels: []float64{0}, Transition: []float64{1}})
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, i := range []int{10, 90} {
		k := g.Capital[i]
		fmt.Printf("k = %.4f: grid policy %.4f, closed form %.4f\n", k, g.Policy[i], 0.27*math.Pow(k, 0.3))
	}
	fmt.Printf("spacing %.4f\n", g.Spacing())
	// Output:
	// k = 0.1294: grid policy 0.1460, closed form 0.1462
	// k = 0.1787: grid policy 0.1608, closed form 0.1611
	// spacing 0.0006
}
