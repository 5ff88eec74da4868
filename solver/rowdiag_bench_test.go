package solver

import (
	"fmt"
	"testing"
)

// The cost of the row diagnostics of issue 10 (docs/BENCHMARKS.md, "Row-
// shape diagnostics"): the prior divergence of every row, which Discretize
// computes after the solve, and the shape test of every row, which
// Diagnose runs.

// benchAR1Rows returns a maximum-entropy AR(1) chain on n lattice points
// with the nodes, weights and conditional law its rows were solved on.
func benchAR1Rows(n int) (*Chain, []float64, []float64, conditional) {
	p := AR1{Rho: 0.9, Sigma: 0.1}
	c, err := p.Discretize(Settings{States: n})
	if err != nil {
		panic(err)
	}
	sd := p.StationarySD()
	nodes, logW := placeGrid(NodesLattice, n, 0, sd, 0, Normal{0, sd})
	law := conditional{Mean: make([]float64, n), SD: make([]float64, n)}
	for i, x := range nodes {
		law.Mean[i], law.SD[i] = p.Rho*x, p.Sigma
	}
	return c, nodes, logW, law
}

func BenchmarkPriorKL(b *testing.B) {
	for _, n := range []int{9, 21, 51} {
		c, nodes, logW, law := benchAR1Rows(n)
		b.Run(fmt.Sprintf("ar1-%d", n), func(b *testing.B) {
			benchLoop(b, func() error { scalarPriorKL(nodes, logW, law, c.Transition); return nil })
		})
	}
	for _, v := range []struct {
		name string
		p    VAR
		n    int
	}{{"VAR2DModerate9", varModerate, 9}, {"VAR2DPersistent9", varPersistent, 9}, {"VAR3D7", varThree, 7}} {
		s := Settings{States: v.n}
		c, err := v.p.Discretize(s)
		if err != nil {
			b.Fatal(err)
		}
		grid, logW, law := v.p.maxentProblem(s)
		b.Run(v.name, func(b *testing.B) {
			benchLoop(b, func() error { vectorPriorKL(grid, logW, law, c.Transition); return nil })
		})
	}
}

func BenchmarkShapes(b *testing.B) {
	for _, n := range []int{9, 21, 51} {
		c, _, _, _ := benchAR1Rows(n)
		b.Run(fmt.Sprintf("ar1-%d", n), func(b *testing.B) {
			benchLoop(b, func() error {
				rows := newShaper(c.Grid)
				for i := 0; i < n; i++ {
					rows.shape(c.Row(i))
				}
				return nil
			})
		})
	}
}
