package bench

import (
	"context"
	"fmt"
	"path/filepath"
	"runtime"
	"testing"

	"gridstage/batch"
	"gridstage/batch/cache"
	"gridstage/batch/runner"
	"gridstage/manifests"
)

// load writes and loads a sweep manifest.
func load(b *testing.B, s Sweep) *manifests.Manifest {
	b.Helper()
	path, err := s.Write(b.TempDir())
	if err != nil {
		b.Fatal(err)
	}
	m, err := manifests.Load(path)
	if err != nil {
		b.Fatal(err)
	}
	return m
}

var sweep10k = Sweep{Points: 10000, States: 21, Moments: 4, Compare: "none", Seed: 1}

// benchSolve times solving the sweep's jobs one after another, without a
// pool, a cache or files.
func benchSolve(b *testing.B, s Sweep) {
	m := load(b, s)
	b.ResetTimer()
	cpu := startCPU()
	for i := 0; i < b.N; i++ {
		for _, j := range m.Jobs {
			p, err := j.Build()
			if err != nil {
				b.Fatal(err)
			}
			if _, err := p.Solve(); err != nil {
				b.Fatal(err)
			}
		}
	}
	cpu.report(b)
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*len(m.Jobs))/1e3, "µs/job")
}

// benchPool times solving the sweep on the worker pool with a sink that
// keeps nothing: the pool's own scaling, without Parquet writing.
func benchPool(b *testing.B, s Sweep, workers int) {
	m := load(b, s)
	work := func(_ context.Context, i int) (manifests.Solution, error) {
		p, err := m.Jobs[i].Build()
		if err != nil {
			return manifests.Solution{}, err
		}
		return p.Solve()
	}
	drop := func(int, manifests.Solution, error) error { return nil }
	b.ResetTimer()
	cpu := startCPU()
	for i := 0; i < b.N; i++ {
		if _, err := runner.Run(context.Background(), len(m.Jobs), runner.Options{Workers: workers}, work, drop); err != nil {
			b.Fatal(err)
		}
	}
	cpu.report(b)
}

// cacheMode says how a benchmark run uses the cache.
type cacheMode int

const (
	noCache   cacheMode = iota
	coldCache           // a fresh, empty cache each run: solve and store
	warmCache           // a cache filled before timing: read only
)

// benchRun times gridstage run's engine end to end: manifest jobs through
// the worker pool (and cache) into Parquet files, on as many cores as
// workers, as gridstage run --workers does (GOMAXPROCS = workers: the
// output's encoders share those cores with the solves).
func benchRun(b *testing.B, s Sweep, workers int, mode cacheMode) {
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(workers))
	benchRunOn(b, s, workers, mode)
}

// benchRunOn is benchRun on whatever cores GOMAXPROCS allows.
func benchRunOn(b *testing.B, s Sweep, workers int, mode cacheMode) {
	m := load(b, s)
	root := b.TempDir()
	var c *cache.Cache
	if mode == warmCache {
		var err error
		if c, err = cache.Open(filepath.Join(root, "cache")); err != nil {
			b.Fatal(err)
		}
		if _, err := batch.Run(context.Background(), m, batch.Options{Out: filepath.Join(root, "fill"), Cache: c}); err != nil {
			b.Fatal(err)
		}
	}
	b.ResetTimer()
	cpu := startCPU()
	for i := 0; i < b.N; i++ {
		if mode == coldCache {
			b.StopTimer()
			var err error
			if c, err = cache.Open(filepath.Join(root, fmt.Sprint("cold", i))); err != nil {
				b.Fatal(err)
			}
			b.StartTimer()
		}
		res, err := batch.Run(context.Background(), m, batch.Options{Out: filepath.Join(root, fmt.Sprint("out", i)), Workers: workers, Cache: c})
		if err != nil {
			b.Fatal(err)
		}
		if mode == warmCache && res.Solved != 0 {
			b.Fatalf("warm run solved %d jobs", res.Solved)
		}
	}
	cpu.report(b)
}

func BenchmarkSolve10k(b *testing.B)        { benchSolve(b, sweep10k) }
func BenchmarkPool10kWorkers1(b *testing.B) { benchPool(b, sweep10k, 1) }
func BenchmarkPool10kWorkers2(b *testing.B) { benchPool(b, sweep10k, 2) }
func BenchmarkRun10kWorkers1(b *testing.B)  { benchRun(b, sweep10k, 1, noCache) }
func BenchmarkRun10kWorkers2(b *testing.B)  { benchRun(b, sweep10k, 2, noCache) }
func BenchmarkRun10kColdCache(b *testing.B) { benchRun(b, sweep10k, 2, coldCache) }

// BenchmarkRun10kWorkers1Cores2 solves on one goroutine while the output is
// written on both cores: what --workers 1 meant before workers counted
// cores.
func BenchmarkRun10kWorkers1Cores2(b *testing.B) {
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(2))
	benchRunOn(b, sweep10k, 1, noCache)
}
func BenchmarkRun10kWarmCache(b *testing.B) { benchRun(b, sweep10k, 2, warmCache) }

// BenchmarkRun10kRerun times what a user sees re-running the same manifest
// into the same output folder with a warm cache: the folder's run.json shows
// the output is up to date, so nothing is solved or written.
func BenchmarkRun10kRerun(b *testing.B) {
	m := load(b, sweep10k)
	root := b.TempDir()
	c, err := cache.Open(filepath.Join(root, "cache"))
	if err != nil {
		b.Fatal(err)
	}
	out := filepath.Join(root, "out")
	if _, err := batch.Run(context.Background(), m, batch.Options{Out: out, Cache: c}); err != nil {
		b.Fatal(err)
	}
	b.ResetTimer()
	cpu := startCPU()
	for i := 0; i < b.N; i++ {
		res, err := batch.Run(context.Background(), m, batch.Options{Out: out, Workers: 2, Cache: c})
		if err != nil {
			b.Fatal(err)
		}
		if !res.UpToDate || res.Solved != 0 {
			b.Fatalf("re-run solved %d jobs (up to date: %v)", res.Solved, res.UpToDate)
		}
	}
	cpu.report(b)
}
