package solver

import "testing"

// benchVAR times one maximum-entropy (or baseline) discretization of p.
func benchVAR(b *testing.B, p VAR, s Settings) {
	b.Helper()
	for b.Loop() {
		if _, err := p.Discretize(s); err != nil {
			b.Fatal(err)
		}
	}
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
	for b.Loop() {
		if _, err := svDemo.Discretize(Settings{States: 31}, Settings{States: 9}); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkLifeCycleMixture15(b *testing.B) {
	p := lifeDemo(true)
	for b.Loop() {
		if _, err := p.Discretize(Settings{States: 15}); err != nil {
			b.Fatal(err)
		}
	}
}
