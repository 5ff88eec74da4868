package solver

import (
	"fmt"
	"testing"
)

// BenchmarkAR1 times one discretization of a Gaussian AR(1) (ρ = 0.9,
// σ = 0.1) per method, number of states and moments. Baselines match a
// fixed set of moments, so they are run at moments=0 only.
func BenchmarkAR1(b *testing.B) {
	p := AR1{Rho: 0.9, Sigma: 0.1}
	for _, m := range []Method{MaxEnt, Tauchen, TauchenHussey, Rouwenhorst, AddaCooper} {
		for _, n := range []int{9, 21, 51} {
			moments := []int{2, 4}
			if m != MaxEnt {
				moments = []int{0}
			}
			for _, L := range moments {
				name := fmt.Sprintf("method=%s/states=%d/moments=%d", m, n, L)
				b.Run(name, func(b *testing.B) { benchAR1(b, p, Settings{States: n, Method: m, Moments: L}) })
			}
		}
	}
}

func benchAR1(b *testing.B, p AR1, s Settings) {
	b.ReportAllocs()
	for b.Loop() {
		if _, err := p.Discretize(s); err != nil {
			b.Fatal(err)
		}
	}
}
