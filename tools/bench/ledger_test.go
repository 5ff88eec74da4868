package bench

import (
	"fmt"
	"path/filepath"
	"runtime"
	"testing"

	"gridstage/pipeline/lineage"
)

// ledgerRows makes n ledger rows of an invented estimation: estimate i
// used chain i of a 21-state sweep.
func ledgerRows(n, from int) []lineage.Record {
	recs := make([]lineage.Record, n)
	now := lineage.Now()
	for i := range recs {
		h := fmt.Sprintf("%064x", from+i)
		recs[i] = lineage.Record{EstimateID: h, EstimatePath: "estimates/" + h[:16] + ".json", Pipeline: "wage-risk-estimation",
			Stage: "savings", StageVersion: "1", Model: "savings", ChainHash: h, SpecHash: h, ManifestHash: h,
			ChainPath: "out/earnings.points.parquet", FileHash: h, Process: "earnings", Point: from + i, Time: now, Numeric: "3"}
	}
	return recs
}

// benchLedger times appending one row to a ledger of n rows and reading
// it back, and reports the heap each allocates: what an estimation's
// outer loop pays per recorded estimate once the ledger holds n rows.
func benchLedger(b *testing.B, n int) {
	path := filepath.Join(b.TempDir(), "lineage.parquet")
	if err := lineage.Append(path, ledgerRows(n, 0)); err != nil {
		b.Fatal(err)
	}
	var before, after runtime.MemStats
	b.ResetTimer()
	runtime.ReadMemStats(&before)
	for i := 0; i < b.N; i++ {
		if err := lineage.Append(path, ledgerRows(1, n+i)); err != nil {
			b.Fatal(err)
		}
	}
	runtime.ReadMemStats(&after)
	b.ReportMetric(float64(after.TotalAlloc-before.TotalAlloc)/float64(b.N)/1e6, "alloc-MB/append")
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(n), "ns/append/row")
}

func BenchmarkLedgerAppend10k(b *testing.B)  { benchLedger(b, 10000) }
func BenchmarkLedgerAppend100k(b *testing.B) { benchLedger(b, 100000) }
func BenchmarkLedgerAppend300k(b *testing.B) { benchLedger(b, 300000) }
