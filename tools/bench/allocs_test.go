package bench

import (
	"context"
	"fmt"
	"path/filepath"
	"runtime"
	"testing"

	"gridstage/batch"
)

// benchAllocs runs a sweep end to end (2 workers, no cache, into Parquet)
// and reports heap allocations and allocated bytes per chain, counted by
// the runtime over the whole run (runtime.MemStats.Mallocs and
// TotalAlloc): the figures that must not grow with the number of chains.
func benchAllocs(b *testing.B, points int) {
	m := load(b, Sweep{Points: points, States: 21, Moments: 4, Compare: "none", Seed: 1})
	root := b.TempDir()
	var before, after runtime.MemStats
	b.ResetTimer()
	runtime.ReadMemStats(&before)
	for i := 0; i < b.N; i++ {
		if _, err := batch.Run(context.Background(), m, batch.Options{Out: filepath.Join(root, fmt.Sprint(i)), Workers: 2}); err != nil {
			b.Fatal(err)
		}
	}
	runtime.ReadMemStats(&after)
	chains := float64(b.N * points)
	b.ReportMetric(float64(after.Mallocs-before.Mallocs)/chains, "allocs/chain")
	b.ReportMetric(float64(after.TotalAlloc-before.TotalAlloc)/chains, "B/chain")
}

func BenchmarkAllocs1k(b *testing.B)   { benchAllocs(b, 1000) }
func BenchmarkAllocs10k(b *testing.B)  { benchAllocs(b, 10000) }
func BenchmarkAllocs100k(b *testing.B) { benchAllocs(b, 100000) }
