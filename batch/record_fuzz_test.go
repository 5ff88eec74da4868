package batch

import (
	"bytes"
	"context"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gridstage/manifests"
)

// FuzzParseRecord feeds the run.json reader arbitrary bytes (seeded with a
// real record and damaged copies). It must never panic, and it may accept
// only bytes whose record hash checks.
func FuzzParseRecord(f *testing.F) {
	dir := f.TempDir()
	m, err := manifests.Parse(strings.NewReader(smallManifest), "small.yaml", dir)
	if err != nil {
		f.Fatal(err)
	}
	if _, err := Run(context.Background(), m, Options{Out: dir, Workers: 1}); err != nil {
		f.Fatal(err)
	}
	good, err := os.ReadFile(filepath.Join(dir, RecordFile))
	if err != nil {
		f.Fatal(err)
	}
	f.Add(good)
	for _, i := range []int{0, 10, len(good) / 2, len(good) - 5} {
		b := bytes.Clone(good)
		b[i] ^= 0x04
		f.Add(b)
	}
	f.Add(good[:len(good)-3])
	f.Add([]byte(`{"jobs": [{"params": {"x": 1e999}}]` + recordHashLead + `0` + recordHashTail))
	f.Fuzz(func(t *testing.T, b []byte) {
		r, err := parseRecord("run.json", b)
		if err != nil {
			return
		}
		if r == nil || checkRecordHash(b) != nil {
			t.Fatal("accepted a record whose hash does not check")
		}
	})
}
