package solver

import (
	"fmt"
	"runtime"
	"testing"
	"time"
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

// BenchmarkSensitivityCost times the chain alone (Discretize) and the
// chain with its derivatives (Sensitivities) alternately in one loop, in
// CPU time of the benchmark's thread (threadCPU), and reports their ratio
// ("sens/chain-…"), and the smooth policy's chain against the exact one's
// ("smooth/exact"): on a shared machine, interleaved CPU-time ratios are
// far steadier than two wall-clock benchmarks run minutes apart. Targets:
// sens/chain ≤ 2, smooth/exact ≤ 1.5.
func BenchmarkSensitivityCost(b *testing.B) {
	for _, rho := range []float64{0.9, 0.99} {
		for _, n := range []int{9, 21, 51} {
			b.Run(fmt.Sprintf("rho=%g/states=%d", rho, n), func(b *testing.B) {
				p := AR1{Rho: rho, Sigma: 0.1}
				exact := Settings{States: n, Moments: 4, Matching: MatchExact}
				smooth := Settings{States: n, Moments: 4, Matching: MatchSmooth}
				var tExact, tSmooth, tSensExact, tSensSmooth time.Duration
				runtime.LockOSThread()
				defer runtime.UnlockOSThread()
				timed := func(d *time.Duration, f func() error) {
					start := threadCPU()
					if err := f(); err != nil {
						b.Fatal(err)
					}
					*d += threadCPU() - start
				}
				for b.Loop() {
					timed(&tExact, func() error { _, err := p.Discretize(exact); return err })
					timed(&tSensExact, func() error { _, _, err := p.Sensitivities(exact); return err })
					timed(&tSmooth, func() error { _, err := p.Discretize(smooth); return err })
					timed(&tSensSmooth, func() error { _, _, err := p.Sensitivities(smooth); return err })
				}
				b.ReportMetric(float64(tSensExact)/float64(tExact), "sens/chain-exact")
				b.ReportMetric(float64(tSensSmooth)/float64(tSmooth), "sens/chain-smooth")
				b.ReportMetric(float64(tSmooth)/float64(tExact), "smooth/exact")
				b.ReportMetric(float64(tExact.Nanoseconds())/1e3/float64(b.N), "cpu-µs-exact")
				b.ReportMetric(float64(tSensExact.Nanoseconds())/1e3/float64(b.N), "cpu-µs-sens-exact")
				b.ReportMetric(float64(tSmooth.Nanoseconds())/1e3/float64(b.N), "cpu-µs-smooth")
				b.ReportMetric(float64(tSensSmooth.Nanoseconds())/1e3/float64(b.N), "cpu-µs-sens-smooth")
			})
		}
	}
}
