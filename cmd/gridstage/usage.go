package main

import (
	"errors"
	"fmt"
	"strings"

	"gridstage/solver"
)

// isCobraUsage recognises the argument errors cobra itself returns.
func isCobraUsage(err error) bool {
	msg := err.Error()
	for _, p := range []string{"unknown command", "unknown flag", "unknown shorthand", "accepts ", "requires at least", "invalid argument", "flag needs an argument", "required flag"} {
		if strings.Contains(msg, p) {
			return true
		}
	}
	return false
}

// flagError turns a solver parameter error into a one-line usage error
// naming the flag (flagFor maps solver parameter names to flag names).
func flagError(err error, flagFor map[string]string) error {
	var pe *solver.ParamError
	if errors.As(err, &pe) {
		name := pe.Param
		if f, ok := flagFor[name]; ok {
			name = f
		}
		return badInput("--%s %g is out of range: want %s", name, pe.Value, pe.Want)
	}
	return err
}

// choice validates a string flag against its allowed values.
func choice(flag, value string, allowed []string) error {
	for _, a := range allowed {
		if a == value {
			return nil
		}
	}
	return badInput("--%s %q is not recognised: want one of %s", flag, value, strings.Join(allowed, ", "))
}

// needPositiveInt validates an integer flag's range.
func intRange(flag string, v, lo, hi int) error {
	if v < lo || v > hi {
		return badInput("--%s %d is out of range: want an integer from %d to %d", flag, v, lo, hi)
	}
	return nil
}

var _ = fmt.Sprint
