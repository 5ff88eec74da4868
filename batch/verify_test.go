package batch

import (
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gridstage/formats"
)

// smallManifest is the issue-16 reproduction manifest: its output is
// byte-identical on every run, so byte positions are exact.
const smallManifest = `run: small
output: {folder: outsmall, format: parquet}
processes:
  - {name: inc, kind: ar1, rho: 0.9, sigma: 0.1, states: 5, compare: tauchen, sweep: {vary: {rho: [0.5, 0.9]}}}
`

// otherManifest is a different run into the same folder.
const otherManifest = `run: other
processes:
  - {name: inc, kind: ar1, rho: 0.8, sigma: 0.2, states: 5, sweep: {vary: {rho: [0.3, 0.8]}}}
  - {name: ret, kind: iid, distribution: {law: normal, mean: 0, sd: 1}, states: 5}
`

func runInto(t *testing.T, text, dir string) *Result {
	t.Helper()
	res, err := Run(context.Background(), parse(t, text), Options{Out: dir, Workers: 1})
	if err != nil {
		t.Fatal(err)
	}
	return res
}

func TestVerifyAgainstRecord(t *testing.T) {
	dir := t.TempDir()
	runInto(t, smallManifest, dir)
	rep, err := Verify(dir, VerifyOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if rep.BytesChecked != len(formats.Tables) || rep.Record == nil || rep.Sets != 1 {
		t.Errorf("bytes of %d files checked, %d sets, record %v; want %d, 1, a record", rep.BytesChecked, rep.Sets, rep.Record != nil, len(formats.Tables))
	}
	// A single file is checked against the record beside it.
	rep, err = Verify(filepath.Join(dir, "inc.transitions.parquet"), VerifyOptions{})
	if err != nil || rep.BytesChecked != 1 {
		t.Errorf("single file: bytes checked %d, err %v", rep.BytesChecked, err)
	}
}

// Issue 16 case 1: the output of two runs mixed in one folder. A run
// removes the folder's previous record before its first set is renamed
// in, so a run killed between its sets' renames leaves sets of both runs
// and no record; and verify refuses a folder without a record, a set of
// another run beside a record, and a set carrying another manifest hash.
func TestMixedRunsAreRefused(t *testing.T) {
	dir := t.TempDir()
	runInto(t, smallManifest, dir)

	// While the second run writes, the folder has no record.
	sawRecord := false
	_, err := Run(context.Background(), parse(t, otherManifest), Options{Out: t.TempDir(), Workers: 1})
	if err != nil {
		t.Fatal(err)
	}
	_, err = Run(context.Background(), parse(t, otherManifest), Options{Out: dir, Workers: 1, Progress: func(int) {
		if _, err := os.Stat(filepath.Join(dir, RecordFile)); err == nil {
			sawRecord = true
		}
	}})
	if err != nil {
		t.Fatal(err)
	}
	if sawRecord {
		t.Error("the previous run's record was still in the folder while the new run wrote")
	}

	// A kill -9 between the renames of the second run's sets: its first
	// set (inc) replaced the first run's, its second never came, and the
	// record was already gone.
	crashed := t.TempDir()
	runInto(t, smallManifest, crashed)
	second := t.TempDir()
	runInto(t, otherManifest, second)
	for _, table := range formats.Tables {
		name := "inc." + table + ".parquet"
		b, err := os.ReadFile(filepath.Join(second, name))
		if err != nil {
			t.Fatal(err)
		}
		os.WriteFile(filepath.Join(crashed, name), b, 0o644)
	}
	os.Remove(filepath.Join(crashed, RecordFile))
	if _, err := Verify(crashed, VerifyOptions{}); err == nil || !strings.Contains(err.Error(), "has no run.json") {
		t.Errorf("folder of a killed run: err = %v, want no run.json", err)
	}

	// The first run's record put back beside the second run's set.
	first := t.TempDir()
	runInto(t, smallManifest, first)
	rec, _ := os.ReadFile(filepath.Join(first, RecordFile))
	os.WriteFile(filepath.Join(crashed, RecordFile), rec, 0o644)
	var mm *RecordMismatchError
	if _, err := Verify(crashed, VerifyOptions{}); !errors.As(err, &mm) {
		t.Errorf("another run's set beside a record: err = %v, want a record mismatch", err)
	}

	// A set left by another run beside a complete run.
	mixed := t.TempDir()
	runInto(t, smallManifest, mixed)
	for _, table := range formats.Tables {
		name := "ret." + table + ".parquet"
		b, _ := os.ReadFile(filepath.Join(second, name))
		os.WriteFile(filepath.Join(mixed, name), b, 0o644)
	}
	if _, err := Verify(mixed, VerifyOptions{}); err == nil || !strings.Contains(err.Error(), "not listed in run.json: it was left by another run") {
		t.Errorf("a stray set: err = %v", err)
	}
}

// Issue 16 case 4: run.json is protected by its record hash. Every byte
// flip and every truncation of it fails verify, and so does an edited
// chain hash even when the editor recomputes the record hash.
func TestRecordTamperingFails(t *testing.T) {
	dir := t.TempDir()
	runInto(t, smallManifest, dir)
	path := filepath.Join(dir, RecordFile)
	orig, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	defer os.WriteFile(path, orig, 0o644)
	for i := range orig {
		b := bytes.Clone(orig)
		b[i] ^= 0x01
		os.WriteFile(path, b, 0o644)
		if _, err := Verify(dir, VerifyOptions{}); err == nil {
			t.Errorf("byte %d of run.json flipped: verify passed", i)
		}
	}
	for n := 0; n < len(orig); n += 7 {
		os.WriteFile(path, orig[:n], 0o644)
		if _, err := Verify(dir, VerifyOptions{}); err == nil {
			t.Errorf("run.json cut to %d bytes: verify passed", n)
		}
	}
	// A forger who edits a chain hash and recomputes the record hash is
	// caught by the files themselves.
	rec, err := parseRecord(path, orig)
	if err != nil {
		t.Fatal(err)
	}
	rec.Jobs[1].ChainHash = strings.Repeat("0", 64)
	rec.Jobs[0].Params[0].Value = 0.55
	if err := WriteRecord(dir, rec); err != nil {
		t.Fatal(err)
	}
	if _, err := Verify(dir, VerifyOptions{}); err == nil || !strings.Contains(err.Error(), "records \"rho\" = 0.55, the files hold 0.5") {
		t.Errorf("edited parameter with a fresh record hash: err = %v", err)
	}
}

// Issue 12 item 6 (footer test): flip each byte of a small Parquet output
// in turn; verify exits 1 for every flip. Here every file of the set, and
// each file verified on its own (as `gridstage verify FILE` does).
func TestEveryByteFlipFailsVerify(t *testing.T) {
	dir := t.TempDir()
	runInto(t, smallManifest, dir)
	for _, table := range formats.Tables {
		path := filepath.Join(dir, "inc."+table+".parquet")
		orig, err := os.ReadFile(path)
		if err != nil {
			t.Fatal(err)
		}
		passed := 0
		for i := range orig {
			b := bytes.Clone(orig)
			b[i] ^= 0x01
			os.WriteFile(path, b, 0o644)
			if _, err := Verify(path, VerifyOptions{}); err == nil {
				passed++
				if passed < 5 {
					t.Errorf("%s byte %d flipped: verify passed", filepath.Base(path), i)
				}
			}
		}
		if passed > 0 {
			t.Errorf("%s: %d of %d flips passed verify", filepath.Base(path), passed, len(orig))
		}
		os.WriteFile(path, orig, 0o644)
	}
}

// A file whose bytes changed while its values did not is its own finding,
// and --values-only accepts it.
func TestBytesChangedIsItsOwnFinding(t *testing.T) {
	dir := t.TempDir()
	runInto(t, smallManifest, dir)
	path := filepath.Join(dir, "inc.summary.parquet")
	b, _ := os.ReadFile(path)
	// The Parquet footer's created_by string: no reader's values depend on it.
	i := bytes.LastIndex(b, []byte("gridstage format"))
	if i < 0 {
		t.Fatal("no created_by in the footer")
	}
	b[i] = 'G'
	os.WriteFile(path, b, 0o644)
	var bc *BytesChangedError
	if _, err := Verify(dir, VerifyOptions{}); !errors.As(err, &bc) || !strings.Contains(err.Error(), "values still match") {
		t.Fatalf("err = %v, want a BytesChangedError", err)
	}
	if _, err := Verify(dir, VerifyOptions{ValuesOnly: true}); err != nil {
		t.Errorf("values only: %v", err)
	}
}

// Issue 16 case 5: a damaged output is not called up to date; the run
// says why it solves again and leaves output that verifies.
func TestUpToDateChecksBytes(t *testing.T) {
	dir := t.TempDir()
	runInto(t, smallManifest, dir)
	path := filepath.Join(dir, "inc.transitions.parquet")
	f, err := os.OpenFile(path, os.O_WRONLY, 0)
	if err != nil {
		t.Fatal(err)
	}
	f.WriteAt([]byte("XXXX"), 200)
	f.Close()
	res := runInto(t, smallManifest, dir)
	if res.UpToDate || !strings.Contains(res.Stale, "inc.transitions.parquet changed since the run wrote it") {
		t.Fatalf("after damage: up to date %v, stale %q", res.UpToDate, res.Stale)
	}
	if _, err := Verify(dir, VerifyOptions{}); err != nil {
		t.Fatal(err)
	}
	// A damaged record is a reason too.
	rp := filepath.Join(dir, RecordFile)
	b, _ := os.ReadFile(rp)
	b[20] ^= 0x02
	os.WriteFile(rp, b, 0o644)
	if res := runInto(t, smallManifest, dir); res.UpToDate || !strings.Contains(res.Stale, "run.json is damaged") {
		t.Fatalf("after record damage: up to date %v, stale %q", res.UpToDate, res.Stale)
	}
	if res := runInto(t, smallManifest, dir); !res.UpToDate {
		t.Fatal("intact output not up to date")
	}
}

func TestRecordHashIsOverPrecedingBytes(t *testing.T) {
	dir := t.TempDir()
	runInto(t, smallManifest, dir)
	b, _ := os.ReadFile(filepath.Join(dir, RecordFile))
	i := bytes.LastIndex(b, []byte(recordHashLead))
	sum := sha256.Sum256(b[:i])
	if want := `"record_hash": "` + hex.EncodeToString(sum[:]) + `"`; !bytes.Contains(b, []byte(want)) {
		t.Errorf("run.json does not end with %s", want)
	}
}
