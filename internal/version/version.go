// Package version holds the tool's version and the numeric version of the
// solver, which enters every spec hash: bump Numeric whenever a change can
// alter any number a chain contains.
package version

// Tool is the released version of gridstage.
const Tool = "0.1.0"

// Numeric identifies the numerical behaviour of the solver. Two builds with
// the same Numeric produce the same chains from the same spec.
const Numeric = "1"
