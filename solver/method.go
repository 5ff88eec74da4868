package solver

import (
	"fmt"
	"strings"
)

// Method names a discretization method.
type Method int

const (
	// MaxEnt is maximum-entropy moment matching (Farmer and Toda 2017).
	MaxEnt Method = iota
	// Tauchen is Tauchen (1986): even grid, CDF differences.
	Tauchen
	// TauchenHussey is Tauchen and Hussey (1991): Gauss-Hermite quadrature.
	TauchenHussey
	// Rouwenhorst is Rouwenhorst (1995) as analysed by Kopecky and Suen (2010).
	Rouwenhorst
	// AddaCooper is the equal-probability-interval method of Adda and Cooper
	// (2003) for a Gaussian AR(1).
	AddaCooper
)

var methodNames = [...]string{"maxent", "tauchen", "tauchen-hussey", "rouwenhorst", "adda-cooper"}

func (m Method) String() string {
	if int(m) >= 0 && int(m) < len(methodNames) {
		return methodNames[m]
	}
	return fmt.Sprintf("Method(%d)", int(m))
}

// ParseMethod maps a method name to its Method.
func ParseMethod(s string) (Method, error) {
	for i, n := range methodNames {
		if n == s {
			return Method(i), nil
		}
	}
	return 0, fmt.Errorf("solver: unknown method %q (want one of %s)", s, strings.Join(methodNames[:], ", "))
}

// MethodNames lists the accepted method names.
func MethodNames() []string { return append([]string(nil), methodNames[:]...) }

// ExactMoments is the number of conditional moments a baseline method
// matches by construction: Rouwenhorst matches mean and variance
// (Kopecky and Suen 2010); Tauchen, Tauchen-Hussey and Adda-Cooper match
// none exactly.
// For MaxEnt it returns −1: the number is a setting.
func (m Method) ExactMoments() int {
	switch m {
	case Rouwenhorst:
		return 2
	case Tauchen, TauchenHussey, AddaCooper:
		return 0
	}
	return -1
}
