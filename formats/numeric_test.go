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
		set := sweepSet(t, 3, 1, 5)
		set.Numeric = "7"
		for i := range set.Records {
			set.Records[i].SpecHash = version.SpecHash("7", set.Records[i].Spec)
		}
		dir := t.TempDir()
		if _, err := Write(dir, set, Options{Format: f}); err != nil {
			t.Fatal(err)
		}
		if _, err := Verify(dir); err != nil {
			t.Errorf("%s: a consistent set of numeric version 7 does not verify: %v", f, err)
		}
		refs, err := FindSets(dir)
		if err != nil || len(refs) != 1 {
			t.Fatalf("%s: %d sets, %v", f, len(refs), err)
		}
		r, err := Open(refs[0], nil)
		if err != nil {
			t.Fatal(err)
		}
		if r.Header.Numeric != "7" {
			t.Errorf("%s: header numeric version %q, want 7", f, r.Header.Numeric)
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
			t.Errorf("%s: spec hashes of version 7 labelled %s: verify error %v", f, version.Numeric, err)
		}
	}
}
