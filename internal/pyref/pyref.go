// Package pyref runs reference computations in Python for tests: programs
// under Debian's /usr/bin/python3, where python3-numpy and python3-scipy
// install (the python3 first on the PATH may be another interpreter without
// them).
package pyref

import (
	"bytes"
	"encoding/json"
	"os"
	"os/exec"
	"strings"
	"testing"
)

// Python is the interpreter Debian's python3-* packages install for.
const Python = "/usr/bin/python3"

// Eval runs program with json, sys and numpy (as np) imported, each of
// modules imported, and input, JSON-encoded, bound to the name data; it
// decodes the JSON the program prints into out. When a module is missing
// the test is skipped, except under CI=true, where .ci/run installs the
// modules and a missing reference library is a failure.
func Eval(t testing.TB, input any, program string, out any, modules ...string) {
	t.Helper()
	imports := "import json, sys\nimport numpy as np\n"
	for _, m := range modules {
		imports += "import " + m + "\n"
	}
	if err := exec.Command(Python, "-c", imports).Run(); err != nil {
		if os.Getenv("CI") == "true" {
			t.Fatalf("reference library missing in CI: %s cannot import numpy, %s: %v", Python, strings.Join(modules, ", "), err)
		}
		t.Skipf("skipping reference check: %s cannot import numpy, %s (apt-get install python3-numpy python3-scipy)", Python, strings.Join(modules, ", "))
	}
	in, err := json.Marshal(input)
	if err != nil {
		t.Fatal(err)
	}
	cmd := exec.Command(Python, "-c", imports+"data = json.load(sys.stdin)\n"+program)
	cmd.Stdin = bytes.NewReader(in)
	cmd.Stderr = os.Stderr
	b, err := cmd.Output()
	if err != nil {
		t.Fatalf("python reference program failed: %v", err)
	}
	if err := json.Unmarshal(b, out); err != nil {
		t.Fatalf("decoding python output %q: %v", b, err)
	}
}
