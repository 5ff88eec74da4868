package formats

import (
	"os"
	"path/filepath"
	"testing"
)

// FuzzVerifyDamaged feeds damaged gridstage files to Verify, which must
// return (usually an error) and never panic or exhaust memory. Seeds are
// real files of both formats with a few damages.
func FuzzVerifyDamaged(f *testing.F) {
	for _, format := range []Format{Parquet, Arrow} {
		dir := f.TempDir()
		res, err := Write(dir, sweepSet(f, 2, 2, 3), Options{Format: format})
		if err != nil {
			f.Fatal(err)
		}
		for _, file := range res.Files {
			b, err := os.ReadFile(file.Path)
			if err != nil {
				f.Fatal(err)
			}
			f.Add(b)
			f.Add(b[:len(b)/2])
			flipped := append([]byte(nil), b...)
			flipped[len(b)/3] ^= 0xFF
			f.Add(flipped)
		}
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		// Named like gridstage output of the format its magic suggests,
		// so that Verify treats it as damaged output.
		name := "x.transitions.parquet"
		if len(data) >= 6 && string(data[:6]) == "ARROW1" {
			name = "x.transitions.arrow"
		}
		path := filepath.Join(t.TempDir(), name)
		if err := os.WriteFile(path, data, 0o644); err != nil {
			t.Fatal(err)
		}
		Verify(path)
		if ref, ok := RefOf(path); ok {
			if s, err := Read(ref, nil); err == nil && s == nil {
				t.Fatal("Read returned neither a set nor an error")
			}
		}
	})
}
