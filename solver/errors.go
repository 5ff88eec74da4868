package solver

import (
	"errors"
	"fmt"
	"strconv"
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
	// Text is the value as the user names it when the parameter is a
	// choice (a method, a node rule); empty for numbers.
	Text string
	Want string // the valid range, e.g. "in (-1, 1)"
}

func (e *ParamError) Error() string {
	return fmt.Sprintf("solver: %s = %s is invalid: want %s", e.Param, e.ValueText(), e.Want)
}

// ValueText returns the value as the user would write it: the choice's
// name, or the number.
func (e *ParamError) ValueText() string {
	if e.Text != "" {
		return e.Text
	}
	return strconv.FormatFloat(e.Value, 'g', -1, 64)
}

// badChoice returns a *ParamError for a named choice (a method, a node
// rule), so that messages name it rather than its number.
func badChoice(name, value, want string) error {
	return &ParamError{Param: name, Text: value, Want: want}
}

// badParam returns a *ParamError.
func badParam(name string, v float64, want string) error {
	return &ParamError{Param: name, Value: v, Want: want}
}
