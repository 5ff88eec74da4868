package manifests

import (
	"errors"
	"strconv"
	"strings"
)

// rangeProblem says why the text of a number cannot be held in float64,
// or "" when it can: beyond ±1.8e308 (strconv reports ErrRange; YAML then
// resolves the scalar as text), or so small that it rounds to 0 although
// its digits are not all zero (strconv returns 0 without an error).
func rangeProblem(text string) string {
	v, err := strconv.ParseFloat(text, 64)
	if errors.Is(err, strconv.ErrRange) && v != 0 {
		return "is beyond the range of double-precision numbers: want a magnitude below about 1.8e308"
	}
	if err == nil && v == 0 && nonzeroMantissa(text) {
		return "is too small for double precision and would be read as 0: want 0 itself or a magnitude above about 4.9e-324"
	}
	return ""
}

// nonzeroMantissa reports whether the digits before any exponent include
// one other than 0.
func nonzeroMantissa(text string) bool {
	m, _, _ := strings.Cut(strings.ToLower(text), "e")
	return strings.ContainsAny(m, "123456789")
}
