package solver

import (
	"syscall"
	"testing"
)

// cpuTime returns the CPU time (user + system) this process has used.
func cpuTime() int64 {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	return ru.Utime.Nano() + ru.Stime.Nano()
}

// benchLoop runs f b.N times and reports, beside the wall-clock ns/op, the
// process CPU time per operation (cpu-ns/op), which stays meaningful on a
// shared machine where other jobs stretch the wall clock.
func benchLoop(b *testing.B, f func() error) {
	b.Helper()
	start := cpuTime()
	for b.Loop() {
		if err := f(); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(cpuTime()-start)/float64(b.N), "cpu-ns/op")
}

// benchVAR times one discretization of p.
func benchVAR(b *testing.B, p VAR, s Settings) {
	benchLoop(b, func() error { _, err := p.Discretize(s); return err })
}

// Issue 4 targets: 2-D VAR with 9×9 states ≤ 2 ms, 3-D VAR with 7×7×7
// states ≤ 100 ms, on one core (run with -cpu 1).
func BenchmarkVAR2DModerate9(b *testing.B)   { benchVAR(b, varModerate, Settings{States: 9}) }
func BenchmarkVAR2DPersistent9(b *testing.B) { benchVAR(b, varPersistent, Settings{States: 9}) }
func BenchmarkVAR3D7(b *testing.B)           { benchVAR(b, varThree, Settings{States: 7}) }
func BenchmarkVAR2DTauchen9(b *testing.B) {
	benchVAR(b, varPersistent, Settings{States: 9, Method: Tauchen})
}

func BenchmarkSV31x9(b *testing.B) {
	benchLoop(b, func() error { _, err := svDemo.Discretize(Settings{States: 31}, Settings{States: 9}); return err })
}

func BenchmarkLifeCycleMixture15(b *testing.B) {
	p := lifeDemo(true)
	benchLoop(b, func() error { _, err := p.Discretize(Settings{States: 15}); return err })
}

// Tauchen-type VAR chains of the sizes above, the baselines of issue 15's
// ratio targets (BenchmarkVersusTauchen measures the ratios in one run).
func BenchmarkVAR2DModerateTauchen9(b *testing.B) {
	benchVAR(b, varModerate, Settings{States: 9, Method: Tauchen})
}
func BenchmarkVAR3DTauchen7(b *testing.B) {
	benchVAR(b, varThree, Settings{States: 7, Method: Tauchen})
}
