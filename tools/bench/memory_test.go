package bench

import (
	"runtime"
	"testing"

	"gridstage/manifests"
)

// BenchmarkLoad100kHeap reports the heap a loaded 100,000-point sweep keeps
// (runtime.MemStats.HeapAlloc after a full collection, with and without
// the manifest reachable): the manifest's share of gridstage run's peak
// memory (docs/BENCHMARKS.md, "Estimation-scale runs").
func BenchmarkLoad100kHeap(b *testing.B) {
	s := Sweep{Points: 100000, States: 21, Moments: 4, Compare: "none", Seed: 1}
	path, err := s.Write(b.TempDir())
	if err != nil {
		b.Fatal(err)
	}
	heap := func() uint64 {
		runtime.GC()
		runtime.GC()
		var ms runtime.MemStats
		runtime.ReadMemStats(&ms)
		return ms.HeapAlloc
	}
	var held float64
	for b.Loop() {
		before := heap()
		m, err := manifests.Load(path)
		if err != nil {
			b.Fatal(err)
		}
		after := heap()
		runtime.KeepAlive(m)
		held = float64(after) - float64(before)
	}
	b.ReportMetric(held/1e6, "heap-MB")
	b.ReportMetric(held/1e5, "heap-B/job")
}
