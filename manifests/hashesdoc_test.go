package manifests

import (
	"fmt"
	"os/exec"
	"strings"
	"testing"

	"gridstage/internal/docblock"
	"gridstage/internal/version"
)

// exampleEntry is the manifest entry docs/HASHES.md shows.
const exampleEntry = `- name: income
  kind: ar1
  rho: 0.9
  sigma: 0.1
`

// TestHashesDocExamples writes the examples of docs/HASHES.md from the
// code: the canonical spec of a manifest entry, and its spec hash under
// this build's numeric version as a POSIX shell computes it. The shell
// line shown is run verbatim, so GNU coreutils' sha256sum checks the hash
// independently of Go.
func TestHashesDocExamples(t *testing.T) {
	m, err := Parse(strings.NewReader("run: r\nprocesses:\n"+exampleEntry), "example.yaml", "")
	if err != nil {
		t.Fatal(err)
	}
	j := m.Jobs[0]
	spec := specOf(t, j)
	docblock.Check(t, *update, "docs/HASHES.md", "spec-example",
		"Example — the manifest entry\n\n```yaml\n"+exampleEntry+"```\n\nhas the canonical spec\n\n```json\n"+string(spec)+"\n```\n")

	if strings.Contains(string(spec), "'") {
		t.Fatalf("the example's canonical spec holds a quote, which the shell line cannot carry: %s", spec)
	}
	shell := fmt.Sprintf("printf '%%s\\n%%s' %s '%s' | sha256sum", version.Numeric, spec)
	output := j.SpecHash + "  -"
	if out, err := exec.Command("/bin/sh", "-c", shell).Output(); err != nil {
		t.Logf("cannot run the shell line (%v): the hash is checked against Go's SHA-256 only", err)
	} else if got := strings.TrimSpace(string(out)); got != output {
		t.Errorf("%s\nprints %s, but the spec hash is %s", shell, got, j.SpecHash)
	}
	docblock.Check(t, *update, "docs/HASHES.md", "spec-hash-example",
		fmt.Sprintf("For the example above, under numeric version %s (this build's):\n\n    $ %s\n    %s\n", version.Numeric, shell, output))
}
