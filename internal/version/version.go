// Package version holds the tool's version and the numeric version of the
// solver, which enters every spec hash: bump Numeric whenever a change can
// alter any number a chain or its diagnostics contain.
package version

import (
	"crypto/sha256"
	"encoding/hex"
)

// Tool is the released version of gridstage.
const Tool = "0.1.0"

// Numeric identifies the numerical behaviour of the solver. Two builds with
// the same Numeric produce the same chains and diagnostics from the same
// spec. testdata/numerics holds the chain hashes of a fixed set of specs
// under the current Numeric; the golden test in package batch fails when
// they change and Numeric was not bumped (docs/HASHES.md).
const Numeric = "7"

// SpecHash returns the spec hash of a canonical spec under a numeric
// version: the lower-case hex SHA-256 of numeric, one newline byte and the
// canonical bytes (docs/HASHES.md).
func SpecHash(numeric string, canonical []byte) string {
	h := sha256.New()
	h.Write([]byte(numeric))
	h.Write([]byte{'\n'})
	h.Write(canonical)
	return hex.EncodeToString(h.Sum(nil))
}
