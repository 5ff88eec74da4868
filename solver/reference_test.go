package solver

import (
	"encoding/json"
	"os"
	"os/exec"
	"testing"
)

// scipyEval runs a Python program under Debian's /usr/bin/python3 (where
// python3-scipy installs) and decodes the JSON it prints into out. The
// test is skipped when scipy is absent, except in CI, where .ci/run
// installs it and a missing reference is a failure.
func scipyEval(t *testing.T, program string, out any) {
	t.Helper()
	const python = "/usr/bin/python3"
	if err := exec.Command(python, "-c", "import scipy").Run(); err != nil {
		if os.Getenv("CI") == "true" {
			t.Fatalf("reference library missing in CI: %s cannot import scipy (install python3-scipy): %v", python, err)
		}
		t.Skipf("skipping scipy reference check: %s cannot import scipy (apt-get install python3-scipy)", python)
	}
	cmd := exec.Command(python, "-c", "import json, numpy as np, scipy\n"+program)
	cmd.Stderr = os.Stderr
	b, err := cmd.Output()
	if err != nil {
		t.Fatalf("python reference failed: %v", err)
	}
	if err := json.Unmarshal(b, out); err != nil {
		t.Fatalf("decoding python output %q: %v", b, err)
	}
}
