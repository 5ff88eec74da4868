package solver

import (
	"testing"

	"gridstage/internal/pyref"
)

// vecScipy runs a reference program with input bound to data and
// scipy.linalg, scipy.optimize and scipy.stats imported (see pyref.Eval).
func vecScipy(t *testing.T, input any, program string, out any) {
	t.Helper()
	pyref.Eval(t, input, program, out, "scipy.linalg", "scipy.optimize", "scipy.stats")
}
