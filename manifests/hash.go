package manifests

import (
	"crypto/sha256"
	"encoding/hex"

	"gridstage/internal/version"
)

// SpecHash returns the spec hash of a canonical spec: the hex-encoded
// SHA-256 of version.Numeric, one newline byte, and the canonical bytes
// (docs/HASHES.md). Equal hashes mean equal numbers from any build with the
// same numeric version.
func SpecHash(canonical []byte) string {
	return version.SpecHash(version.Numeric, canonical)
}

// manifestHash is the hex SHA-256 of the manifest's canonical form: the run
// name, the output format and, per job in order, its process, sweep point
// and spec hash (docs/HASHES.md).
func manifestHash(run, format string, jobs []Job) (string, []byte) {
	list := make([]any, len(jobs))
	for i, j := range jobs {
		list[i] = object{"process": j.Process, "point": j.Point, "spec_hash": j.SpecHash}
	}
	canon := encodeCanonical(object{"run": run, "format": format, "jobs": list})
	sum := sha256.Sum256(canon)
	return hex.EncodeToString(sum[:]), canon
}
