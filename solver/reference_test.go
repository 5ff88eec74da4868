package solver

import (
	"testing"

	"gridstage/internal/pyref"
)

// scipyEval runs a reference program with numpy (np), scipy and json
// imported and decodes the JSON it prints into out (see pyref.Eval).
func scipyEval(t *testing.T, program string, out any) {
	t.Helper()
	pyref.Eval(t, nil, program, out, "scipy")
}
