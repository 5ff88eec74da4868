package solver

import (
	"fmt"
	"testing"
)

// BenchmarkMatching times one maxent AR(1) chain (σ = 0.1) under each
// matching policy, at a persistence where every state carries 4 moments
// (ρ = 0.9 on 21 states) and where many give some up (ρ = 0.99): the
// smooth policy's target is at most 1.5 times the exact one's.
func BenchmarkMatching(b *testing.B) {
	for _, rho := range []float64{0.9, 0.99} {
		for _, n := range []int{9, 21, 51} {
			for _, m := range []Matching{MatchExact, MatchSmooth} {
				name := fmt.Sprintf("rho=%g/states=%d/matching=%s", rho, n, m)
				b.Run(name, func(b *testing.B) {
					benchAR1(b, AR1{Rho: rho, Sigma: 0.1}, Settings{States: n, Moments: 4, Matching: m})
				})
			}
		}
	}
}

// BenchmarkSensitivities times the chain together with its derivatives
// with respect to mean, rho and sigma (AR1.Sensitivities), to set beside
// BenchmarkMatching's chain alone: the target is at most 2 times.
func BenchmarkSensitivities(b *testing.B) {
	for _, rho := range []float64{0.9, 0.99} {
		for _, n := range []int{9, 21, 51} {
			for _, m := range []Matching{MatchExact, MatchSmooth} {
				name := fmt.Sprintf("rho=%g/states=%d/matching=%s", rho, n, m)
				b.Run(name, func(b *testing.B) {
					p, s := AR1{Rho: rho, Sigma: 0.1}, Settings{States: n, Moments: 4, Matching: m}
					b.ReportAllocs()
					for b.Loop() {
						if _, _, err := p.Sensitivities(s); err != nil {
							b.Fatal(err)
						}
					}
				})
			}
		}
	}
}
