package formats

import (
	"strings"
	"testing"

	"gridstage/internal/version"
)

// TestNumericVersionBindsSpecHashes: a set records the numeric version its
// chains were solved under, and verify accepts the set only when every
// point's spec hash is the hash of its spec under that version.
func TestNumericVersionBindsSpecHashes(t *testing.T) {
	for _, f := range []Format{Parquet, Arrow} {
		// Written under another version, with spec hashes of that version:
		// reads back with its version and verifies.
		// Any version but this build's (a fixed "7" collided once Numeric
		// reached 7).
		other := "other-" + version.Numeric
		set := sweepSet(t, 3, 1, 5)
		set.Numeric = other
		for i := range set.Records {
			set.Records[i].SpecHash = version.SpecHash(other, set.Records[i].Spec)
		}
		dir := t.TempDir()
		if _, err := Write(dir, set, Options{Format: f}); err != nil {
			t.Fatal(err)
		}
		if _, err := Verify(dir); err != nil {
			t.Errorf("%s: a consistent set of numeric version %s does not verify: %v", f, other, err)
		}
		refs, err := FindSets(dir)
		if err != nil || len(refs) != 1 {
			t.Fatalf("%s: %d sets, %v", f, len(refs), err)
		}
		r, err := Open(refs[0], nil)
		if err != nil {
			t.Fatal(err)
		}
		if r.Header.Numeric != other {
			t.Errorf("%s: header numeric version %q, want %s", f, r.Header.Numeric, other)
		}
		r.Close()

		// The same spec hashes labelled with the current version: verify
		// names the mismatch.
		set.Numeric = ""
		dir = t.TempDir()
		if _, err := Write(dir, set, Options{Format: f}); err != nil {
			t.Fatal(err)
		}
		_, err = Verify(dir)
		if err == nil || !strings.Contains(err.Error(), "under numeric version "+version.Numeric) {
			t.Errorf("%s: spec hashes of version %s labelled %s: verify error %v", f, other, version.Numeric, err)
		}
	}
}
