package solver

import (
	"strconv"
	"testing"
)

// BenchmarkAtMaxStates times one chain at the size bound MaxStates, per
// method (the bound's time and memory are stated in the README and in
// docs/BENCHMARKS.md): an AR(1) with ρ = 0.9, σ = 0.1 (Tauchen 1986's
// running example), and a 2-D VAR at ⌊√MaxStates⌋ points per axis.
func BenchmarkAtMaxStates(b *testing.B) {
	for _, m := range []Method{MaxEnt, Tauchen, TauchenHussey, Rouwenhorst} {
		b.Run("ar1/method="+m.String(), func(b *testing.B) {
			p := AR1{Rho: 0.9, Sigma: 0.1}
			b.ReportAllocs()
			for i := 0; i < b.N; i++ {
				if _, err := p.Discretize(Settings{States: MaxStates, Method: m}); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
	n := 1
	for (n+1)*(n+1) <= MaxStates {
		n++
	}
	b.Run("var2/states="+strconv.Itoa(n)+"x"+strconv.Itoa(n), func(b *testing.B) {
		p := VAR{Coef: []float64{0.9, 0, 0, 0.5}, Cov: []float64{1, 0, 0, 1}}
		b.ReportAllocs()
		for i := 0; i < b.N; i++ {
			if _, err := p.Discretize(Settings{States: n}); err != nil {
				b.Fatal(err)
			}
		}
	})
}
