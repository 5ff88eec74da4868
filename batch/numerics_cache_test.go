package batch

import (
	"context"
	"strconv"
	"testing"

	"gridstage/batch/cache"
	"gridstage/internal/version"
	"gridstage/manifests"
)

// TestCacheNeverServesOtherNumerics fills a cache as builds under other
// numeric versions would (the entries are keyed by the spec hashes those
// builds compute, and hold deliberately wrong chains), then runs the golden
// specs: every job must be solved again, and the chains must be the golden
// ones. A control entry under this build's own key is served, so the test
// would notice a cache that is never read.
func TestCacheNeverServesOtherNumerics(t *testing.T) {
	m, err := manifests.Load(numericsSpecs)
	if err != nil {
		t.Fatal(err)
	}
	g, err := readGolden(numericsFile)
	if err != nil {
		t.Fatal(err)
	}
	others := []string{"0", version.Numeric + "0", "experimental"}
	if n, err := strconv.Atoi(version.Numeric); err == nil {
		others = append(others, strconv.Itoa(n-1), strconv.Itoa(n+1))
	}
	poison := func(t *testing.T, job manifests.Job) manifests.Solution {
		t.Helper()
		prob, err := job.Build()
		if err != nil {
			t.Fatal(err)
		}
		sol, err := prob.Solve()
		if err != nil {
			t.Fatal(err)
		}
		if sol.Ages != nil {
			sol.Ages.Ages[0].Grid[0] += 1
		} else {
			sol.Chain.Grid[0] += 1
		}
		return sol
	}
	c, err := cache.Open(t.TempDir())
	if err != nil {
		t.Fatal(err)
	}
	for _, job := range m.Jobs {
		bad := poison(t, job)
		spec, err := job.Spec()
		if err != nil {
			t.Fatal(err)
		}
		for _, n := range others {
			if n == version.Numeric {
				continue
			}
			if err := c.Put(version.SpecHash(n, spec), &bad); err != nil {
				t.Fatal(err)
			}
		}
	}
	res, err := Run(context.Background(), m, Options{Out: t.TempDir(), Cache: c, Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	if res.Cached != 0 || res.Solved != len(m.Jobs) {
		t.Fatalf("%d jobs from the cache, %d solved: entries of other numeric versions were served", res.Cached, res.Solved)
	}
	rec, err := ReadRecord(res.Dir)
	if err != nil {
		t.Fatal(err)
	}
	if rec.Numeric != version.Numeric {
		t.Errorf("run record says numeric version %q, want %q", rec.Numeric, version.Numeric)
	}
	for _, j := range rec.Jobs {
		if want := g.entries[j.Process].chain; j.ChainHash != want {
			t.Errorf("%s: chain hash %s, golden %s", j.Process, j.ChainHash, want)
		}
	}

	// Control: an entry under this build's key is served as it is.
	job := m.Jobs[0]
	bad := poison(t, job)
	if err := c.Put(job.SpecHash, &bad); err != nil {
		t.Fatal(err)
	}
	res, err = Run(context.Background(), m, Options{Out: t.TempDir(), Cache: c, Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	rec, err = ReadRecord(res.Dir)
	if err != nil {
		t.Fatal(err)
	}
	if res.Cached != len(m.Jobs) || rec.Jobs[0].ChainHash == g.entries[job.Process].chain {
		t.Fatalf("the control entry under this build's spec hash was not served (%d of %d jobs cached)", res.Cached, len(m.Jobs))
	}
}
