package solver

import (
	"bytes"
	"encoding/json"
	"os"
	"os/exec"
	"testing"
)

// vecScipy runs program under Debian's /usr/bin/python3 (where
// python3-numpy and python3-scipy install) with the JSON-encoded input
// bound to the name `data`, and decodes the JSON the program prints into
// out. It skips the test when scipy is absent, except under CI=true, where
// .ci/run installs it and a missing reference library is a failure.
func vecScipy(t *testing.T, input any, program string, out any) {
	t.Helper()
	const python = "/usr/bin/python3"
	if err := exec.Command(python, "-c", "import scipy.linalg, scipy.optimize, scipy.stats").Run(); err != nil {
		if os.Getenv("CI") == "true" {
			t.Fatalf("reference library missing in CI: %s cannot import scipy (install python3-scipy): %v", python, err)
		}
		t.Skipf("skipping scipy reference check: %s cannot import scipy (apt-get install python3-numpy python3-scipy)", python)
	}
	in, err := json.Marshal(input)
	if err != nil {
		t.Fatal(err)
	}
	cmd := exec.Command(python, "-c", "import json, sys, numpy as np, scipy.linalg, scipy.optimize, scipy.stats\ndata = json.load(sys.stdin)\n"+program)
	cmd.Stdin = bytes.NewReader(in)
	cmd.Stderr = os.Stderr
	b, err := cmd.Output()
	if err != nil {
		t.Fatalf("python reference failed: %v", err)
	}
	if err := json.Unmarshal(b, out); err != nil {
		t.Fatalf("decoding python output %q: %v", b, err)
	}
}
