package manifests

import (
	"bytes"
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
// and spec hash (docs/HASHES.md). The form is hashed as it is encoded, job
// by job, never held whole: its keys in canonical (sorted) order are
// format, jobs, run.
func manifestHash(run, format string, jobs []Job) string {
	h := sha256.New()
	var b bytes.Buffer
	flush := func() {
		h.Write(b.Bytes())
		b.Reset()
	}
	b.WriteString(`{"format":`)
	writeCanonical(&b, format)
	b.WriteString(`,"jobs":[`)
	for i, j := range jobs {
		if i > 0 {
			b.WriteByte(',')
		}
		writeCanonical(&b, object{"process": j.Process, "point": j.Point, "spec_hash": j.SpecHash})
		if b.Len() >= 1<<16 {
			flush()
		}
	}
	b.WriteString(`],"run":`)
	writeCanonical(&b, run)
	b.WriteByte('}')
	flush()
	return hex.EncodeToString(h.Sum(nil))
}
