package manifests

import (
	"bytes"
	"fmt"
	"strings"
	"sync"
	"testing"

	"gridstage/solver"
)

// TestRebuiltSpecMatchesJob checks that the spec Build rebuilds for a
// sweep point is the one the job's canonical spec and hash were made
// from: re-encoding it gives the same bytes, for every job of every good
// manifest.
func TestRebuiltSpecMatchesJob(t *testing.T) {
	toRoot(t)
	n := 0
	for _, tc := range goodManifests {
		for _, j := range loadGood(t, tc.file).Jobs {
			q, err := j.checked()
			if err != nil {
				t.Fatalf("%s: %v", tc.file, err)
			}
			if got := encodeCanonical(q.canonicalSpec()); !bytes.Equal(got, specOf(t, j)) {
				t.Errorf("%s job %s/%d: rebuilt spec\n %s\nwant\n %s", tc.file, j.Process, j.Point, got, specOf(t, j))
			}
			if SpecHash(specOf(t, j)) != j.SpecHash {
				t.Errorf("%s job %s/%d: spec hash does not match its canonical spec", tc.file, j.Process, j.Point)
			}
			n++
		}
	}
	if n < 50 {
		t.Errorf("only %d jobs checked", n)
	}
}

// TestBuildConcurrent builds the jobs of a sweep from several goroutines
// at once, as the worker pool does (run with -race), and checks each
// problem against the job's own swept values.
func TestBuildConcurrent(t *testing.T) {
	src := "run: r\nprocesses:\n  - name: p\n    kind: ar1\n    sigma: 0.1\n    innovation: {law: t, nu: 5}\n" +
		"    sweep: {vary: {rho: {from: -0.5, to: 0.5, count: 11}, states: [5, 7], innovation.nu: [5, 9]}}\n"
	m, err := Parse(strings.NewReader(src), "c.yaml", "")
	if err != nil {
		t.Fatal(err)
	}
	if len(m.Jobs) != 44 {
		t.Fatalf("%d jobs, want 44", len(m.Jobs))
	}
	var wg sync.WaitGroup
	errs := make(chan error, 4*len(m.Jobs))
	for w := 0; w < 4; w++ {
		wg.Go(func() {
			for _, j := range m.Jobs {
				p, err := j.Build()
				if err != nil {
					errs <- err
					continue
				}
				want := map[string]float64{}
				for _, prm := range j.Params {
					want[prm.Name] = prm.Value
				}
				if p.Settings.States != int(want["states"]) {
					errs <- fmt.Errorf("job %d: %d states, want %g", j.Point, p.Settings.States, want["states"])
				}
				if ar, ok := p.Model.(solver.AR1); !ok || ar.Rho != want["rho"] {
					errs <- fmt.Errorf("job %d: model %#v, want rho %g", j.Point, p.Model, want["rho"])
				}
			}
		})
	}
	wg.Wait()
	close(errs)
	for err := range errs {
		t.Error(err)
	}
}

// specOf returns a job's canonical spec, failing the test if it cannot be
// rebuilt.
func specOf(t testing.TB, j Job) []byte {
	t.Helper()
	b, err := j.Spec()
	if err != nil {
		t.Fatal(err)
	}
	return b
}
