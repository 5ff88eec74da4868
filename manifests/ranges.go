package manifests

import (
	"errors"

	"gridstage/solver"
)

// checkNumericRanges applies the solver's numerical bounds (solver.Validate:
// persistence, scales, means, conditioning; see solver/ranges.go) to the
// process of one point, so that a manifest refuses exactly what
// `gridstage discretize` refuses, with the range that works.
func checkNumericRanges(r *reporter, p *processSpec) bool {
	v, has := p.spec.model().(interface{ Validate() error })
	if !has {
		return true
	}
	err := v.Validate()
	if err == nil {
		return true
	}
	var pe *solver.ParamError
	if errors.As(err, &pe) {
		r.add(p.at, ErrRange, "%s = %s is out of range: want %s", pe.Param, formatNumber(pe.Value), pe.Want)
	} else {
		r.add(p.at, ErrRange, "%v", err)
	}
	return false
}
