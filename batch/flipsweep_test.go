package batch

import (
	"encoding/json"
	"fmt"
	"gridstage/internal/noderef"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"sync"
	"testing"

	"gridstage/formats"
)

// flipMask is the XOR mask applied to byte i in the sweep: the bit
// position rotates with i, so every bit position is hit in every region
// of a file while each byte is flipped once.
func flipMask(i int) byte { return 1 << (i % 8) }

// sweepDir is a temporary folder, kept after the test when
// GRIDSTAGE_FLIP_DUMP names a file to list the surviving copies in (for
// reading them by hand).
func sweepDir(t *testing.T) string {
	if os.Getenv("GRIDSTAGE_FLIP_DUMP") == "" {
		return t.TempDir()
	}
	d, err := os.MkdirTemp("", "flips")
	if err != nil {
		t.Fatal(err)
	}
	return d
}

type flipPair struct {
	Original string   `json:"original"`
	Damaged  []string `json:"damaged"`
}

// sweepFlips flips every byte of the file at orig in turn, keeps the
// copies that accepted passes (run on a copy with the original's name) in
// a folder of the outer test, and returns them for the standard readers.
func sweepFlips(outer, t *testing.T, orig string, accepted func(path string) bool) flipPair {
	t.Helper()
	b, err := os.ReadFile(orig)
	if err != nil {
		t.Fatal(err)
	}
	work := filepath.Join(sweepDir(t), filepath.Base(orig))
	keep := sweepDir(outer)
	pair := flipPair{Original: orig}
	for i := range b {
		m := flipMask(i)
		b[i] ^= m
		if err := os.WriteFile(work, b, 0o644); err != nil {
			t.Fatal(err)
		}
		b[i] ^= m
		if !accepted(work) {
			continue
		}
		dir := filepath.Join(keep, fmt.Sprintf("%d-%02x", i, m))
		os.Mkdir(dir, 0o755)
		if err := os.Rename(work, filepath.Join(dir, filepath.Base(orig))); err != nil {
			t.Fatal(err)
		}
		pair.Damaged = append(pair.Damaged, filepath.Join(dir, filepath.Base(orig)))
	}
	return pair
}

// TestFlipSweepAgainstStandardReaders (issue 16 case 3): every byte of
// every file of the small run, in both formats, is flipped in turn; each
// copy that verify accepts on its values alone (--values-only, no run
// record: the byte digests that catch every flip by default are off) must
// read with DuckDB (Parquet) or apache-arrow (Arrow IPC) as the very same
// column names, types, values, row count and metadata as the original.
func TestFlipSweepAgainstStandardReaders(t *testing.T) {
	if testing.Short() {
		t.Skip("flips every byte of ten files")
	}
	node, interopDir := noderef.Interop(t, "the byte-flip sweep")
	var (
		mu    sync.Mutex
		pairs []flipPair
		total int
	)
	// The ten files are swept in parallel subtests (one verify per byte).
	outer := t
	t.Run("sweep", func(t *testing.T) {
		for _, f := range []formats.Format{formats.Parquet, formats.Arrow} {
			dir := sweepDir(outer) // kept until the readers have read the originals
			if _, err := Run(t.Context(), parse(t, smallManifest), Options{Out: dir, Workers: 1, Format: &f}); err != nil {
				t.Fatal(err)
			}
			for _, table := range formats.Tables {
				orig := filepath.Join(dir, formats.FileName("inc", table, f))
				t.Run(filepath.Base(orig), func(t *testing.T) {
					t.Parallel()
					p := sweepFlips(outer, t, orig, func(path string) bool {
						_, err := Verify(path, VerifyOptions{ValuesOnly: true})
						return err == nil
					})
					mu.Lock()
					pairs, total = append(pairs, p), total+len(p.Damaged)
					mu.Unlock()
				})
			}
		}
	})
	t.Logf("%d flipped copies passed verify --values-only; reading them with DuckDB and apache-arrow", total)
	if dump := os.Getenv("GRIDSTAGE_FLIP_DUMP"); dump != "" {
		b, _ := json.Marshal(map[string]any{"pairs": pairs})
		os.WriteFile(dump, b, 0o644)
		t.Skip("survivors listed in " + dump)
	}
	checkWithReaders(t, node, interopDir, pairs)
}

func checkWithReaders(t *testing.T, node, interopDir string, pairs []flipPair) {
	t.Helper()
	list := filepath.Join(t.TempDir(), "flips.json")
	b, _ := json.Marshal(map[string]any{"pairs": pairs})
	os.WriteFile(list, b, 0o644)
	cmd := exec.Command(node, filepath.Join(interopDir, "flips.mjs"), list)
	out, err := cmd.Output()
	if err != nil {
		t.Fatalf("flips.mjs: %v\n%s", err, out)
	}
	var res struct {
		Checked int
		Differ  []struct{ Path, Reason string }
	}
	if err := json.Unmarshal(out, &res); err != nil {
		t.Fatalf("flips.mjs printed %q: %v", out, err)
	}
	for i, d := range res.Differ {
		if i < 40 {
			t.Errorf("%s passed verify but %s", strings.TrimPrefix(d.Path, os.TempDir()), d.Reason)
		}
	}
	if len(res.Differ) > 0 {
		t.Errorf("%d of %d verified copies read differently", len(res.Differ), res.Checked)
	}
}
