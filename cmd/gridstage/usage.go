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
		if pe.Text != "" { // a named choice (a method, a node rule)
			name := "--" + pe.Param
			if f, ok := flagFor[pe.Param]; ok {
				name = "--" + f
			}
			return badInput("%s %s does not apply: want %s", name, pe.Text, pe.Want)
		}
		if f, ok := flagFor[pe.Param]; ok {
			return badInput("--%s %g is out of range: want %s", f, pe.Value, pe.Want)
		}
		// A quantity derived from several flags (the stationary s.d., say).
		return badInput("%s = %.6g is out of range: want %s", pe.Param, pe.Value, pe.Want)
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
	if now, ok := renamedValues[value]; ok && contains(allowed, now) {
		return badInput("--%s %q is not recognised: did you mean %q? (%q is the former name)", flag, value, now, value)
	}
	return badInput("--%s %q is not recognised: want one of %s", flag, value, strings.Join(allowed, ", "))
}

// renamedValues maps flag values that earlier versions accepted to their
// current spelling (the same renames as in manifests).
var renamedValues = map[string]string{"even": "lattice", "quantile": "equal-mass"}

// renamedFlags maps flags that earlier versions accepted to the flag that
// now takes their place, named after the manifest key it stands for.
var renamedFlags = map[string]string{
	"grid":        "--nodes",
	"grid-axes":   "--axes",
	"dist":        "--distribution",
	"mu":          "--mean (normal) or --log-mean (lognormal)",
	"sigma":       "--sd (normal) or --log-sd (lognormal)",
	"lo":          "--lower",
	"hi":          "--upper",
	"loc":         "--location",
	"mix-weights": "--component weight=W,mean=M,sd=S (once per component)",
	"mix-means":   "--component weight=W,mean=M,sd=S (once per component)",
	"mix-sds":     "--component weight=W,mean=M,sd=S (once per component)",
}

// flagHint adds the current spelling to pflag's "unknown flag: --NAME"
// when NAME is a former flag.
func flagHint(err error) error {
	const prefix = "unknown flag: --"
	msg := err.Error()
	if !strings.HasPrefix(msg, prefix) {
		return &usageError{msg: msg}
	}
	if now, ok := renamedFlags[strings.TrimPrefix(msg, prefix)]; ok {
		return &usageError{msg: msg + ": did you mean " + now + "? (the former name)"}
	}
	return &usageError{msg: msg}
}

func contains(list []string, s string) bool {
	for _, x := range list {
		if x == s {
			return true
		}
	}
	return false
}

// needPositiveInt validates an integer flag's range.
func intRange(flag string, v, lo, hi int) error {
	if v < lo || v > hi {
		return badInput("--%s %d is out of range: want an integer from %d to %d", flag, v, lo, hi)
	}
	return nil
}

var _ = fmt.Sprint
