package figures

import (
	"testing"

	"gridstage/internal/pyref"
)

// scipyEval runs a reference program with scipy available (see pyref.Eval).
func scipyEval(t *testing.T, program string, out any) {
	t.Helper()
	pyref.Eval(t, nil, program, out, "scipy")
}
