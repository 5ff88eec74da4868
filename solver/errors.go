package solver

import (
	"errors"
	"fmt"
)

// ErrInfeasible reports that a moment target lies outside the convex hull of
// the grid's moment vectors, so no probability vector can match it.
var ErrInfeasible = errors.New("solver: moment target outside the convex hull of the grid")

// ErrNeedsNormal reports a method defined for Gaussian innovations only
// (Adda and Cooper 2003 cut the normal stationary law into
// equal-probability intervals) applied to another innovation law.
var ErrNeedsNormal = errors.New("solver: method adda-cooper needs normal innovations: its intervals are quantiles of the normal stationary law")

// ParamError reports a parameter outside its valid range.
type ParamError struct {
	Param string // parameter name as the user knows it, e.g. "rho"
	Value float64
	Want  string // the valid range, e.g. "in (-1, 1)"
}

func (e *ParamError) Error() string {
	return fmt.Sprintf("solver: %s = %g is invalid: want %s", e.Param, e.Value, e.Want)
}

// badParam returns a *ParamError.
func badParam(name string, v float64, want string) error {
	return &ParamError{Param: name, Value: v, Want: want}
}
