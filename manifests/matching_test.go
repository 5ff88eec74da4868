package manifests

import (
	"strings"
	"testing"

	"gridstage/solver"
)

// TestMatchingInCanonicalSpec: the smooth policy enters the canonical spec
// (so its chains get their own spec hash), and the exact one, the default,
// is left out, so that a manifest naming it hashes like one that does not.
func TestMatchingInCanonicalSpec(t *testing.T) {
	parse := func(extra string) Job {
		t.Helper()
		src := "run: m\nprocesses:\n  - name: y\n    kind: ar1\n    rho: 0.95\n    sigma: 0.1\n" + extra
		m, err := Parse(strings.NewReader(src), "m.yaml", ".")
		if err != nil {
			t.Fatal(err)
		}
		return m.Jobs[0]
	}
	plain, exact, smooth := parse(""), parse("    matching: exact\n"), parse("    matching: smooth\n")
	if plain.SpecHash != exact.SpecHash || string(specOf(t, plain)) != string(specOf(t, exact)) {
		t.Errorf("matching: exact changes the spec:\n%s\n%s", specOf(t, plain), specOf(t, exact))
	}
	if !strings.Contains(string(specOf(t, smooth)), `"matching":"smooth"`) || smooth.SpecHash == plain.SpecHash {
		t.Errorf("matching: smooth is not in the canonical spec: %s", specOf(t, smooth))
	}
	back, err := ParseSpec(specOf(t, smooth))
	if err != nil {
		t.Fatal(err)
	}
	if back.SpecHash != smooth.SpecHash {
		t.Errorf("the canonical spec does not read back to itself")
	}
	pr, err := back.Build()
	if err != nil {
		t.Fatal(err)
	}
	if pr.Settings.Matching != solver.MatchSmooth {
		t.Errorf("the settings built from the spec have matching %s", pr.Settings.Matching)
	}
}
