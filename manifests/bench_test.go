package manifests

import (
	"strconv"
	"strings"
	"testing"
)

// benchmarkSweep parses a manifest whose one process sweeps n values of
// rho: the cost of validation, canonical encoding and hashing per job.
func benchmarkSweep(b *testing.B, n int) {
	src := "run: r\nprocesses:\n  - name: p\n    kind: ar1\n    sigma: 0.1\n    sweep: {vary: {rho: {from: -0.9, to: 0.9, count: " + strconv.Itoa(n) + "}}}\n"
	b.ReportAllocs()
	for b.Loop() {
		if _, err := Parse(strings.NewReader(src), "b.yaml", ""); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkSweep100(b *testing.B)   { benchmarkSweep(b, 100) }
func BenchmarkSweep10000(b *testing.B) { benchmarkSweep(b, 10000) }

// BenchmarkBuildSweepPoint times Job.Build for a sweep point, which
// rebuilds and re-checks the point's spec rather than keeping one per job.
func BenchmarkBuildSweepPoint(b *testing.B) {
	src := "run: r\nprocesses:\n  - name: p\n    kind: ar1\n    sigma: 0.1\n    sweep: {vary: {rho: {from: -0.9, to: 0.9, count: 100}}}\n"
	m, err := Parse(strings.NewReader(src), "b.yaml", "")
	if err != nil {
		b.Fatal(err)
	}
	b.ReportAllocs()
	i := 0
	for b.Loop() {
		if _, err := m.Jobs[i%len(m.Jobs)].Build(); err != nil {
			b.Fatal(err)
		}
		i++
	}
}
