package report

import (
	"bytes"
	"context"
	"io"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"testing"

	"gridstage/batch"
	"gridstage/manifests"
	"gridstage/tools/bench"
)

// largeRun is a 50,000-point run made once per test binary and shared by
// the tests and the benchmark that need it.
var largeRun struct {
	once sync.Once
	dir  string // the temporary folder holding the sweep and its output
	out  string // the output folder
	err  error
}

func TestMain(m *testing.M) {
	code := m.Run()
	if largeRun.dir != "" {
		os.RemoveAll(largeRun.dir)
	}
	os.Exit(code)
}

// largeOutput returns the output folder of an estimation-scale run: a
// sweep file of 50,000 AR(1) parameter draws (persistence uniform in
// [0.5, 0.99], shock s.d. in [0.05, 0.30]; bench.Sweep, seed 1), each a
// 9-state maximum-entropy chain matching 4 moments with a Tauchen chain
// beside it — the shape of run a 50,000-draw estimation leaves behind.
func largeOutput(tb testing.TB) string {
	tb.Helper()
	largeRun.once.Do(func() {
		dir, err := os.MkdirTemp("", "gridstage-report-50k-")
		if err != nil {
			largeRun.err = err
			return
		}
		largeRun.dir = dir
		path, err := bench.Sweep{Points: 50000, States: 9, Moments: 4, Compare: "tauchen", Seed: 1}.Write(dir)
		if err != nil {
			largeRun.err = err
			return
		}
		m, err := manifests.Load(path)
		if err != nil {
			largeRun.err = err
			return
		}
		largeRun.out = filepath.Join(dir, "out")
		_, largeRun.err = batch.Run(context.Background(), m, batch.Options{Out: largeRun.out})
	})
	if largeRun.err != nil {
		tb.Fatal(largeRun.err)
	}
	return largeRun.out
}

// largeReport renders the large run's page.
func largeReport(tb testing.TB) []byte {
	tb.Helper()
	run, err := Load(largeOutput(tb))
	if err != nil {
		tb.Fatal(err)
	}
	var buf bytes.Buffer
	if err := Write(&buf, run, Options{}); err != nil {
		tb.Fatal(err)
	}
	return buf.Bytes()
}

// pageSizeLimit is the largest page a 50,000-point run may give (issue
// 13: "a page under 5 MB").
const pageSizeLimit = 5_000_000

// TestLargeRunReport checks the page of a 50,000-point run: under the size
// limit, leading with the map over the two swept parameters, the worst
// chains in detail, and a table of at most tableRows chains that says how
// many it leaves out.
func TestLargeRunReport(t *testing.T) {
	if testing.Short() {
		t.Skip("the 50,000-point run is skipped in -short mode")
	}
	page := largeReport(t)
	html := string(page)
	t.Logf("page of 50,000 points: %d bytes", len(page))
	if len(page) >= pageSizeLimit {
		t.Errorf("the page has %d bytes, want under %d", len(page), pageSizeLimit)
	}
	for _, want := range []string{
		"50000 chains from 50000 jobs (sweep points) of 1 process",
		"<h2>Across the parameter space</h2>",
		"earnings across rho and sigma",
		"Worst verdict", "Share of states that fell back", "Worst error of a requested moment",
		"The most severe chains in detail",
		"The 400 most severe chains, worst first",
		"49600 more chains have no row here",
	} {
		if !strings.Contains(html, want) {
			t.Errorf("the page does not say %q", want)
		}
	}
	if got := strings.Count(html, `<svg xmlns="http://www.w3.org/2000/svg" viewBox`); got != 3 {
		t.Errorf("%d map panels, want 3", got)
	}
	if got := strings.Count(html, "<tr class="); got != tableRows {
		t.Errorf("%d table rows, want %d", got, tableRows)
	}
	if strings.Contains(html, `<ul class="glance">`) {
		t.Error("a large run still lists chains one by one at a glance")
	}
}

// BenchmarkReport50k reads the 50,000-point run (verifying its values)
// and writes its page, as `gridstage report` does (docs/BENCHMARKS.md).
func BenchmarkReport50k(b *testing.B) {
	dir := largeOutput(b)
	for b.Loop() {
		run, err := Load(dir)
		if err != nil {
			b.Fatal(err)
		}
		if err := Write(io.Discard, run, Options{}); err != nil {
			b.Fatal(err)
		}
	}
}
