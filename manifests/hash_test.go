package manifests

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gridstage/internal/version"
)

// minimalCanonical is the canonical spec of testdata/manifests/good/minimal.yaml
// written out by hand from docs/HASHES.md: every default filled in (9
// states, maxent, 4 moments, lattice nodes of half-width √8, Rouwenhorst baseline,
// mean 0, normal innovation). 2.8284271247461903 is √8 in shortest
// round-trip digits, as Python 3 prints repr(math.sqrt(8)).
const minimalCanonical = `{"compare":"rouwenhorst","innovation":{"law":"normal"},"kind":"ar1","mean":0,"method":"maxent","moments":4,"nodes":"lattice","rho":0.9,"sigma":0.1,"states":9,"width":2.8284271247461903}`

// minimalSpecHash was computed outside the project with GNU coreutils:
// printf '2\n%s' "$CANONICAL" | sha256sum. It holds for numeric version 2.
const minimalSpecHash = "6270a6b97e1646d2045909cddd28e4cc609e1a15743fc1687665f1ea9c360e7c"

func TestCanonicalSpec(t *testing.T) {
	toRoot(t)
	m := loadGood(t, "testdata/manifests/good/minimal.yaml")
	j := m.Jobs[0]
	if string(specOf(t, j)) != minimalCanonical {
		t.Errorf("canonical spec\n got %s\nwant %s", specOf(t, j), minimalCanonical)
	}
	if got := version.SpecHash("2", specOf(t, j)); got != minimalSpecHash {
		t.Errorf("spec hash under numeric version 2: %s, want %s (coreutils sha256sum)", got, minimalSpecHash)
	}
	if want := version.SpecHash(version.Numeric, specOf(t, j)); j.SpecHash != want {
		t.Errorf("spec hash %s, want %s: the hash under this build's numeric version %s", j.SpecHash, want, version.Numeric)
	}
}

// TestCanonicalForms checks the encoding rules on specs written in
// different but equivalent ways: they must give identical bytes.
func TestCanonicalForms(t *testing.T) {
	forms := []string{
		"{name: a, kind: ar1, rho: 0.9, sigma: 0.1}",
		"{sigma: 1e-1, rho: 0.90, kind: ar1, name: b, states: 9.0, mean: -0}",
		"{name: c, kind: ar1, rho: 0.9, sigma: 0.1, moments: 4, nodes: lattice, width: 2.8284271247461903, method: maxent, compare: rouwenhorst, innovation: {law: normal}}",
		"{name: d, kind: ar1, rho: 0.9, sigma: 0.1, floden: false}",
	}
	var first []byte
	for i, f := range forms {
		m, err := Parse(strings.NewReader("run: r\nprocesses:\n  - "+f+"\n"), "r.yaml", "")
		if err != nil {
			t.Fatalf("%s: %v", f, err)
		}
		c := specOf(t, m.Jobs[0])
		if i == 0 {
			first = c
			continue
		}
		if !bytes.Equal(c, first) {
			t.Errorf("%s\n gives %s\n  not %s", f, c, first)
		}
	}
}

// TestCanonicalIsJSON checks that every canonical spec is compact JSON
// (encoding/json's Compact leaves it unchanged) whose object keys are in
// increasing byte order at every level.
func TestCanonicalIsJSON(t *testing.T) {
	// The checker itself must catch disorder, also inside nested objects.
	for _, bad := range []string{`{"b":1,"a":2}`, `{"a":[{"y":1,"x":2}]}`} {
		if keysSorted(json.NewDecoder(strings.NewReader(bad))) == nil {
			t.Fatalf("keysSorted accepts %s", bad)
		}
	}
	toRoot(t)
	for _, tc := range goodManifests {
		for _, j := range loadGood(t, tc.file).Jobs {
			var compact bytes.Buffer
			if err := json.Compact(&compact, specOf(t, j)); err != nil {
				t.Fatalf("%s: %v", specOf(t, j), err)
			}
			if !bytes.Equal(compact.Bytes(), specOf(t, j)) {
				t.Errorf("not compact: %s", specOf(t, j))
			}
			dec := json.NewDecoder(bytes.NewReader(specOf(t, j)))
			if err := keysSorted(dec); err != nil {
				t.Errorf("%s: %v", specOf(t, j), err)
			}
		}
	}
}

// keysSorted reads one JSON value and reports an object whose keys are not
// in increasing order.
func keysSorted(dec *json.Decoder) error {
	tok, err := dec.Token()
	if err != nil {
		return err
	}
	switch tok {
	case json.Delim('{'):
		prev := ""
		for i := 0; dec.More(); i++ {
			k, err := dec.Token()
			if err != nil {
				return err
			}
			key := k.(string)
			if i > 0 && key <= prev {
				return fmt.Errorf("key %q follows %q", key, prev)
			}
			prev = key
			if err := keysSorted(dec); err != nil {
				return err
			}
		}
		_, err = dec.Token()
	case json.Delim('['):
		for dec.More() {
			if err := keysSorted(dec); err != nil {
				return err
			}
		}
		_, err = dec.Token()
	}
	return err
}

func TestSpecHashLayout(t *testing.T) {
	// The layout of docs/HASHES.md, checked on a spec other than the golden one.
	canon := []byte(`{"kind":"iid"}`)
	a := SpecHash(canon)
	b := SpecHash(append([]byte(nil), canon...))
	if a != b || len(a) != 64 || strings.ToLower(a) != a {
		t.Fatalf("SpecHash %q is not a stable lower-case hex SHA-256", a)
	}
	if SpecHash([]byte(`{"kind":"iie"}`)) == a {
		t.Fatal("different specs share a hash")
	}
}

// TestSpecHashIgnoresNames checks that only fields that affect numbers
// enter the spec: processes with different names, points and positions
// but equal settings share a spec hash.
func TestSpecHashIgnoresNames(t *testing.T) {
	src := `run: r
processes:
  - {name: a, kind: ar1, rho: 0.9, sigma: 0.1, method: rouwenhorst}
  - name: b
    kind: ar1
    sigma: 0.1
    method: rouwenhorst
    sweep: {vary: {rho: [0.8, 0.9]}}
  - {name: c, kind: ar1, rho: 0.9, sigma: 0.1, method: rouwenhorst, states: 10}
`
	m, err := Parse(strings.NewReader(src), "r.yaml", "")
	if err != nil {
		t.Fatal(err)
	}
	if m.Jobs[0].SpecHash != m.Jobs[2].SpecHash {
		t.Error("equal specs under different names have different hashes")
	}
	if m.Jobs[0].SpecHash == m.Jobs[1].SpecHash || m.Jobs[0].SpecHash == m.Jobs[3].SpecHash {
		t.Error("different specs share a hash")
	}
}

// TestManifestHash checks what the manifest hash covers: jobs (so the
// content of a draw table) and the run name and format, but not comments,
// the description or the output folder.
func TestManifestHash(t *testing.T) {
	dir := t.TempDir()
	write := func(name, body string) {
		if err := os.WriteFile(filepath.Join(dir, name), []byte(body), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	hash := func(src string) string {
		t.Helper()
		m, err := Parse(strings.NewReader(src), "m.yaml", dir)
		if err != nil {
			t.Fatal(err)
		}
		return m.Hash
	}
	write("d.csv", "rho\n0.5\n0.6\n")
	base := "run: r\nprocesses:\n  - {name: p, kind: ar1, sigma: 0.1, sweep: {draws: d.csv}}\n"
	h0 := hash(base)
	same := []string{
		"# a comment\n" + base,
		"description: notes\noutput: {folder: elsewhere}\n" + base,
	}
	for _, s := range same {
		if hash(s) != h0 {
			t.Errorf("hash changed for\n%s", s)
		}
	}
	differ := []string{
		strings.Replace(base, "run: r", "run: r2", 1),
		"output: {format: arrow}\n" + base,
		strings.Replace(base, "sigma: 0.1", "sigma: 0.11", 1),
		strings.Replace(base, "name: p", "name: q", 1),
	}
	for _, s := range differ {
		if hash(s) == h0 {
			t.Errorf("hash unchanged for\n%s", s)
		}
	}
	write("d.csv", "rho\n0.5\n0.61\n")
	if hash(base) == h0 {
		t.Error("hash unchanged after the draw table changed")
	}
}

// TestManifestHashStreamed: the manifest hash, hashed job by job as it is
// encoded, is the SHA-256 of the whole canonical form encoded at once
// (the definition in docs/HASHES.md), here for a sweep of several jobs.
func TestManifestHashStreamed(t *testing.T) {
	m, err := Load(filepath.Join("..", "testdata", "manifests", "good", "sweeps.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	if len(m.Jobs) < 3 {
		t.Fatalf("%d jobs; the test wants a sweep", len(m.Jobs))
	}
	list := make([]any, len(m.Jobs))
	for i, j := range m.Jobs {
		list[i] = object{"process": j.Process, "point": j.Point, "spec_hash": j.SpecHash}
	}
	sum := sha256.Sum256(encodeCanonical(object{"run": m.Run, "format": m.Output.Format, "jobs": list}))
	if want := hex.EncodeToString(sum[:]); m.Hash != want {
		t.Errorf("manifest hash %s, the whole canonical form hashes to %s", m.Hash, want)
	}
}
