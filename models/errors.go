package models

import (
	"errors"
	"fmt"
)

// ErrDiverges reports a model whose solution is infinite on the chain, such
// as a price-dividend ratio when β E[exp(θx)] is too large.
var ErrDiverges = errors.New("models: the solution is infinite on this chain")

// ErrNoConvergence reports an iteration that hit its limit before meeting
// its tolerance.
var ErrNoConvergence = errors.New("models: iteration did not converge")

// ParamError reports a model parameter outside its range.
type ParamError struct {
	Param string  // parameter name as it appears in requests, e.g. "beta"
	Value float64 // the offending value
	Want  string  // the accepted range, e.g. "in (0, 1)"
}

func (e *ParamError) Error() string {
	return fmt.Sprintf("models: parameter %s = %g is out of range: want %s", e.Param, e.Value, e.Want)
}

func badParam(name string, v float64, want string) error {
	return &ParamError{Param: name, Value: v, Want: want}
}
