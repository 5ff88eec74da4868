// Package portablemath holds the elementary and special functions the
// solver needs, computed the same way on every machine, so that a chain's
// numbers and hashes do not depend on where it was solved (docs/HASHES.md).
//
// Go's package math is not portable in the last bit: Exp and Log are
// assembly on amd64 (Exp and Exp2 on arm64), and its Go code (Erfc, Pow,
// Expm1, ...) is compiled with fused multiply-adds on arm64 and without on
// amd64. The functions here are the Go code of package math (itself from
// FreeBSD's msun, Sun's fdlibm; the copyright notices are kept in each
// file) with every product that could meet an addition written
// float64(x*y), which stops fusion on every architecture (The Go
// Programming Language Specification, "Floating-point operators"), and no
// assembly. They therefore return bit-identical results on amd64, arm64
// and every other target. The special functions the distributions need
// come the same way from gonum's Go ports: the regularized incomplete beta
// function and its inverse (Cephes incbet and incbi, Moshier 1989) and the
// normal quantile (Wichura 1988, algorithm AS 241); their copyright
// notices are kept too. internal/fusecheck proves the wrapping is
// complete; the tests check every function against mpmath at 50 digits,
// each with its stated tolerance (1 ulp for most).
//
// Exact operations (Sqrt, Abs, Floor, Frexp, Ldexp, ...) are taken from
// package math, which computes them exactly everywhere.
package portablemath
