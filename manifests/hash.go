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
// and spec hash (docs/HASHES.md), and the names of the processes whose
// sensitivities are written (the key is left out when there are none, so
// manifests without them keep their hashes). The form is hashed as it is
// encoded, job by job, never held whole: its keys in canonical (sorted)
// order are format, jobs, run, sensitivities.
func manifestHash(run, format string, jobs []Job, sens []string) string {
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
	if len(sens) > 0 {
		b.WriteString(`,"sensitivities":[`)
		for i, s := range sens {
			if i > 0 {
				b.WriteByte(',')
			}
			writeCanonical(&b, s)
		}
		b.WriteByte(']')
	}
	b.WriteByte('}')
	flush()
	return hex.EncodeToString(h.Sum(nil))
}

// sensitivityProcesses lists, in manifest order, the processes that write
// sensitivities.
func sensitivityProcesses(ps []Process) []string {
	var out []string
	for _, p := range ps {
		if p.Sensitivities {
			out = append(out, p.Name)
		}
	}
	return out
}
