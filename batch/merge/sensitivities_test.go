package merge

import (
	"bytes"
	"context"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gridstage/batch"
	"gridstage/batch/shard"
	"gridstage/manifests"
)

// TestMergeKeepsSensitivities: a run whose process writes its
// sensitivities, split into 3 shards and merged, gives the files of the
// single run byte for byte, the sensitivities table included.
func TestMergeKeepsSensitivities(t *testing.T) {
	const text = `run: merge-sens
processes:
  - name: persistent
    kind: ar1
    rho: 0.9
    sigma: 0.1
    states: 5
    matching: smooth
    sensitivities: true
    sweep:
      vary:
        rho: [0.5, 0.8, 0.9, 0.95]
`
	m, err := manifests.Parse(strings.NewReader(text), "sens.yaml", t.TempDir())
	if err != nil {
		t.Fatal(err)
	}
	root := t.TempDir()
	single := filepath.Join(root, "single")
	if _, err := batch.Run(context.Background(), m, batch.Options{Out: single}); err != nil {
		t.Fatal(err)
	}
	var dirs []string
	for i := 1; i <= 3; i++ {
		dir := filepath.Join(root, "shard", string(rune('0'+i)))
		if _, err := batch.Run(context.Background(), m, batch.Options{Out: dir, Shard: shard.Shard{Index: i, Count: 3}}); err != nil {
			t.Fatal(err)
		}
		dirs = append(dirs, dir)
	}
	merged := filepath.Join(root, "merged")
	if _, err := Merge(dirs, merged); err != nil {
		t.Fatal(err)
	}
	for _, table := range []string{"sensitivities", "transitions", "points"} {
		name := "persistent." + table + ".parquet"
		a, errA := os.ReadFile(filepath.Join(single, name))
		b, errB := os.ReadFile(filepath.Join(merged, name))
		if errA != nil || errB != nil || !bytes.Equal(a, b) {
			t.Errorf("%s: merged file differs from the single run's (%v, %v)", name, errA, errB)
		}
	}
	if _, err := batch.Verify(merged, batch.VerifyOptions{}); err != nil {
		t.Errorf("merged folder: %v", err)
	}
}
