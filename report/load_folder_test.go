package report

import (
	"bytes"
	"encoding/binary"
	"errors"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gridstage/formats"
	"gridstage/manifests"
)

// writeRun does what `gridstage run` does with a manifest, in process: it
// solves every job and writes each process's set with formats, returning
// the output folder.
func writeRun(t *testing.T, manifest string, format formats.Format) string {
	t.Helper()
	m, err := manifests.Load(manifest)
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	for _, p := range m.Processes {
		var set *formats.Set
		for _, k := range p.Jobs {
			job := m.Jobs[k]
			prob, err := job.Build()
			if err != nil {
				t.Fatal(err)
			}
			sol, err := prob.Solve()
			if err != nil {
				t.Fatal(err)
			}
			if set == nil {
				set = &formats.Set{Header: formats.Header{Run: m.Run, Process: p.Name, Kind: p.Kind,
					Method: prob.Settings.Method.String(), Dim: sol.Chain.Dim, Params: p.Swept, ManifestHash: m.Hash}}
			}
			spec, err := job.Spec()
			if err != nil {
				t.Fatal(err)
			}
			params := map[string]float64{}
			for _, q := range job.Params {
				params[q.Name] = q.Value
			}
			rec := formats.Record{Point: job.Point, Params: params, SpecHash: job.SpecHash,
				Spec: spec, Chain: sol.Chain, Diag: sol.Diagnostics, Baseline: sol.BaselineDiagnostics}
			if sol.Baseline != nil {
				rec.BaselineTransition = sol.Baseline.Transition
			}
			set.Records = append(set.Records, rec)
		}
		if _, err := formats.Write(dir, set, formats.Options{Format: format}); err != nil {
			t.Fatal(err)
		}
	}
	return dir
}

// exampleManifest is an invented run with one chain of each verdict.
const exampleManifest = "../testdata/report/kestrel-bay.yaml"

func TestLoadOutputFolder(t *testing.T) {
	dir := writeRun(t, exampleManifest, formats.Parquet)
	r, err := Load(dir)
	if err != nil {
		t.Fatal(err)
	}
	m, err := manifests.Load(exampleManifest)
	if err != nil {
		t.Fatal(err)
	}
	if r.Name != m.Run || r.ManifestHash != m.Hash || r.Tool == "" || len(r.Jobs) != len(m.Processes) {
		t.Fatalf("run %q hash %q tool %q with %d jobs; want %q %q and %d jobs", r.Name, r.ManifestHash, r.Tool, len(r.Jobs), m.Run, m.Hash, len(m.Processes))
	}
	if len(r.Checks) == 0 || !r.Checks[0].OK {
		t.Errorf("verification: %+v", r.Checks)
	}
	byName := map[string]Job{}
	for _, j := range r.Jobs {
		byName[j.Process] = j
		if len(j.Files) != len(formats.Tables) {
			t.Errorf("%s: %d files with hashes, want %d", j.Process, len(j.Files), len(formats.Tables))
		}
	}
	for _, p := range m.Processes {
		j := byName[p.Name]
		if len(j.Points) != len(p.Jobs) {
			t.Fatalf("%s: %d points, manifest has %d", p.Name, len(j.Points), len(p.Jobs))
		}
		for k, pt := range j.Points {
			want := m.Jobs[p.Jobs[k]]
			if pt.Index != want.Point || pt.SpecHash != want.SpecHash || len(pt.Chains) != 1 {
				t.Errorf("%s point %d: index %d spec %s chains %d", p.Name, k, pt.Index, pt.SpecHash, len(pt.Chains))
			}
			pt.ResolveLaws() // loading keeps the stored moments only
			c := pt.Chains[0]
			prob, _ := want.Build()
			sol, _ := prob.Solve()
			// Parquet stores float64 exactly: the chain read back is the
			// chain solved.
			if !equalFloats(c.Chain.Transition, sol.Chain.Transition) || !equalFloats(c.Chain.Grid, sol.Chain.Grid) {
				t.Errorf("%s point %d: chain differs from the solved one", p.Name, k)
			}
			if c.Law.SD != sol.Diagnostics.True.SD || !c.Law.Gaussian {
				t.Errorf("%s point %d: law %+v", p.Name, k, c.Law)
			}
		}
	}
}

func equalFloats(a, b []float64) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if a[i] != b[i] {
			return false
		}
	}
	return true
}

// One file of a set stands for its set; a damaged set is reported as a
// failed check, and files from elsewhere are not gridstage output.
func TestLoadFileDamageAndStrangers(t *testing.T) {
	dir := writeRun(t, exampleManifest, formats.Arrow)
	r, err := Load(filepath.Join(dir, "earnings.summary.arrow"))
	if err != nil {
		t.Fatal(err)
	}
	if len(r.Jobs) != 1 || r.Jobs[0].Process != "earnings" {
		t.Errorf("a file of the earnings set loaded %d jobs", len(r.Jobs))
	}

	stranger := filepath.Join(t.TempDir(), "notes.parquet")
	os.WriteFile(stranger, []byte("PAR1 not really"), 0o644)
	for _, p := range []string{stranger, t.TempDir()} {
		_, err := Load(p)
		var ie *InputError
		if !errors.As(err, &ie) || !strings.Contains(err.Error(), "not gridstage output") {
			t.Errorf("%s: %v, want an InputError saying it is not gridstage output", p, err)
		}
	}

	// Change one probability in the last bit of its mantissa: the
	// content hash no longer matches, so verification fails and the page
	// must say so (or the set cannot be read at all, a failed check).
	r, err = Load(dir)
	if err != nil {
		t.Fatal(err)
	}
	var th Job
	for _, j := range r.Jobs {
		if j.Process == "earnings-th" {
			th = j
		}
	}
	p := th.Points[0].Chains[0].Chain.Transition[0]
	var le [8]byte
	binary.LittleEndian.PutUint64(le[:], math.Float64bits(p))
	path := filepath.Join(dir, "earnings-th.transitions.arrow")
	raw, _ := os.ReadFile(path)
	i := bytes.Index(raw, le[:])
	if i < 0 {
		t.Fatalf("probability %v not found as raw float64 in the Arrow file", p)
	}
	raw[i] ^= 0x01
	os.WriteFile(path, raw, 0o644)
	r, err = Load(dir)
	switch {
	case errors.As(err, new(*InputError)):
		t.Fatalf("a damaged set is a failed check (exit 1), not bad input: %v", err)
	case err != nil:
		// Unreadable: the reader's own chain-hash check caught it; the
		// command exits 1 naming the file and the mismatch.
		if !strings.Contains(err.Error(), "earnings-th") {
			t.Errorf("the error does not name the damaged set: %v", err)
		}
		t.Logf("damaged set refused: %v", err)
	default:
		var html bytes.Buffer
		if err := Write(&html, r, Options{MaxFigureChains: 1}); err != nil {
			t.Fatal(err)
		}
		if r.Checks[0].OK || !strings.Contains(html.String(), "on the files failed") {
			t.Errorf("a flipped probability passed unnoticed: %+v", r.Checks)
		}
	}
}
