package formats

import (
	"sync/atomic"
	"testing"

	"github.com/apache/arrow-go/v18/arrow/memory"

	"gridstage/solver"
)

// peakAllocator records the largest number of Arrow bytes held at once.
type peakAllocator struct {
	memory.Allocator
	cur, peak atomic.Int64
}

func (a *peakAllocator) note(d int64) {
	if c := a.cur.Add(d); c > a.peak.Load() {
		a.peak.Store(c)
	}
}
func (a *peakAllocator) Allocate(n int) []byte { a.note(int64(n)); return a.Allocator.Allocate(n) }
func (a *peakAllocator) Reallocate(n int, b []byte) []byte {
	a.note(int64(n - len(b)))
	return a.Allocator.Reallocate(n, b)
}
func (a *peakAllocator) Free(b []byte) { a.note(-int64(len(b))); a.Allocator.Free(b) }

// streamPoints appends points copies of one chain (with its sweep value
// changed) and returns the peak Arrow memory.
func streamPoints(t testing.TB, dir string, f Format, points, batch int) int64 {
	mem := &peakAllocator{Allocator: memory.NewGoAllocator()}
	p := solver.AR1{Rho: 0.9, Sigma: 0.1}
	c, err := p.Discretize(solver.Settings{States: 9})
	if err != nil {
		t.Fatal(err)
	}
	d := solver.Diagnose(c, p)
	w, err := Create(dir, Header{Run: "stream", Process: "wages", Kind: "ar1", Method: "maxent", Dim: 1, Params: []string{"draw"}},
		Options{Format: f, Allocator: mem, BatchRows: batch})
	if err != nil {
		t.Fatal(err)
	}
	for i := 0; i < points; i++ {
		r := Record{Point: i, Params: map[string]float64{"draw": float64(i)}, SpecHash: specHash(`{}`),
			Spec: []byte(`{}`), Chain: c, Diag: d, Baseline: &d, BaselineTransition: c.Transition}
		if err := w.Append(r); err != nil {
			t.Fatal(err)
		}
	}
	if _, err := w.Close(); err != nil {
		t.Fatal(err)
	}
	return mem.peak.Load()
}

// TestStreamingMemory: the Arrow memory a Writer holds depends on the
// batch size, not on the number of points. With batches of 1024 rows every
// table fills its batch at 2000 points; 6 times more points may not raise
// the peak by more than a quarter (headroom for buffer growth policies;
// common practice, not a published bound).
func TestStreamingMemory(t *testing.T) {
	for _, f := range []Format{Parquet, Arrow} {
		small := streamPoints(t, t.TempDir(), f, 2000, 1024)
		large := streamPoints(t, t.TempDir(), f, 12000, 1024)
		if large > small*5/4 {
			t.Errorf("%s: peak Arrow memory %d bytes for 12000 points, %d for 2000: it grows with the sweep", f, large, small)
		}
		t.Logf("%s: peak Arrow memory %d bytes (2000 points), %d bytes (12000 points)", f, small, large)
	}
}

func benchmarkWrite(b *testing.B, f Format, points int) {
	for i := 0; i < b.N; i++ {
		streamPoints(b, b.TempDir(), f, points, 0)
	}
	b.ReportMetric(float64(points*b.N)/b.Elapsed().Seconds(), "points/s")
}

func BenchmarkWriteParquet10000(b *testing.B) { benchmarkWrite(b, Parquet, 10000) }
func BenchmarkWriteArrow10000(b *testing.B)   { benchmarkWrite(b, Arrow, 10000) }

func benchmarkVerify(b *testing.B, f Format, points int) {
	dir := b.TempDir()
	streamPoints(b, dir, f, points, 0)
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, err := Verify(dir); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(points*b.N)/b.Elapsed().Seconds(), "points/s")
}

func BenchmarkVerifyParquet10000(b *testing.B) { benchmarkVerify(b, Parquet, 10000) }
