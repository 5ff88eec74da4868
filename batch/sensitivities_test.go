package batch

import (
	"bytes"
	"context"
	"testing"

	"gridstage/batch/cache"
	"gridstage/formats"
)

// sensitivityManifest sweeps a smooth AR(1) and asks for its derivatives,
// beside a process that does not, and a 2-D VAR, an i.i.d. law and a
// product of both kinds that do.
const sensitivityManifest = `run: sens-test
processes:
  - name: persistent
    kind: ar1
    rho: 0.9
    sigma: 0.1
    states: 7
    matching: smooth
    sensitivities: true
    sweep:
      vary:
        rho: [0.5, 0.9, 0.97]
        sigma: [0.1, 0.2]
  - name: plain
    kind: ar1
    rho: 0.8
    sigma: 0.1
    states: 5
  - name: pair
    kind: var
    coef: [[0.7, 0.1], [0.05, 0.6]]
    cov: [[0.02, 0.004], [0.004, 0.01]]
    states: 3
    sensitivities: true
  - name: returns
    kind: iid
    distribution: {law: lognormal, log_mean: 0.03, log_sd: 0.15}
    states: 7
    sensitivities: true
  - name: income
    kind: product
    components:
      - {kind: ar1, rho: 0.95, sigma: 0.1, states: 5, matching: smooth}
      - {kind: iid, distribution: {law: t, nu: 8, scale: 0.05}, states: 3}
    sensitivities: true
`

// TestRunSensitivitiesDeterministic: the sensitivities table is written
// for the process that asks, verified with the set, and byte-identical
// with 1 or 3 workers and from a warm cache (which holds chains only: the
// derivatives are recomputed and checked against the cached chain).
func TestRunSensitivitiesDeterministic(t *testing.T) {
	m := parse(t, sensitivityManifest)
	c, err := cache.Open(t.TempDir())
	if err != nil {
		t.Fatal(err)
	}
	var outputs []map[string][]byte
	for k, opt := range []Options{{Workers: 1}, {Workers: 3, Cache: c}, {Workers: 2, Cache: c}} {
		opt.Out = t.TempDir()
		res, err := Run(context.Background(), m, opt)
		if err != nil {
			t.Fatalf("run %d: %v", k, err)
		}
		if k == 2 && res.Cached != len(m.Jobs) {
			t.Errorf("warm run took %d of %d jobs from the cache", res.Cached, len(m.Jobs))
		}
		if _, err := formats.Verify(opt.Out); err != nil {
			t.Errorf("run %d: verify: %v", k, err)
		}
		rep, err := Verify(opt.Out, VerifyOptions{})
		if err != nil {
			t.Errorf("run %d: verify against run.json: %v", k, err)
		} else if len(rep.Files) != 34 {
			t.Errorf("run %d: verify checked %d files, want 34 (7 + 6 + 7 + 7 + 7)", k, len(rep.Files))
		}
		outputs = append(outputs, readAll(t, opt.Out))
	}
	if len(outputs[0]) != 35 || outputs[0]["income.sensitivities.parquet"] == nil || outputs[0]["persistent.sensitivities.parquet"] == nil || outputs[0]["pair.sensitivities.parquet"] == nil ||
		outputs[0]["returns.sensitivities.parquet"] == nil || outputs[0]["plain.sensitivities.parquet"] != nil {
		t.Errorf("%d files written; want 35, with a sensitivities table for every process but plain", len(outputs[0]))
	}
	for k := 1; k < len(outputs); k++ {
		for name, b := range outputs[0] {
			if !bytes.Equal(b, outputs[k][name]) {
				t.Errorf("run %d: %s differs from the single-worker run", k, name)
			}
		}
	}
}
