package lineage

import (
	"encoding/json"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"testing"
)

// TestLedgerFlipSweep (issue 16 cases 3 and 7): every byte of a small
// ledger is flipped in turn (the bit position rotating with the byte).
// Read must never panic (a recovered panic once surfaced as the message),
// and every copy Read accepts must read with DuckDB as the very same
// columns, types, values and metadata as the original.
func TestLedgerFlipSweep(t *testing.T) {
	if testing.Short() {
		t.Skip("flips every byte of a ledger")
	}
	dir := t.TempDir()
	orig := filepath.Join(dir, "lineage.parquet")
	var recs []Record
	for i := 0; i < 4; i++ {
		recs = append(recs, sample(i))
	}
	if err := Append(orig, recs); err != nil {
		t.Fatal(err)
	}
	b, err := os.ReadFile(orig)
	if err != nil {
		t.Fatal(err)
	}
	work := filepath.Join(t.TempDir(), "lineage.parquet")
	var kept []string
	for i := range b {
		m := byte(1) << (i % 8)
		b[i] ^= m
		os.WriteFile(work, b, 0o644)
		b[i] ^= m
		if _, err := Read(work); err != nil {
			continue
		}
		d := filepath.Join(dir, fmt.Sprintf("flip-%d", i))
		os.Mkdir(d, 0o755)
		os.Rename(work, filepath.Join(d, "lineage.parquet"))
		kept = append(kept, filepath.Join(d, "lineage.parquet"))
	}
	t.Logf("%d of %d flipped ledgers read; checking them with DuckDB", len(kept), len(b))
	node, script := flipsScript(t)
	list := filepath.Join(dir, "flips.json")
	js, _ := json.Marshal(map[string]any{"pairs": []any{map[string]any{"original": orig, "damaged": kept}}})
	os.WriteFile(list, js, 0o644)
	out, err := exec.Command(node, script, list).Output()
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
	for _, d := range res.Differ {
		t.Errorf("%s passed Read but %s", d.Path, d.Reason)
	}
	if res.Checked != len(kept) {
		t.Errorf("DuckDB checked %d copies, want %d", res.Checked, len(kept))
	}
}

// flipsScript locates tools/interop/flips.mjs and node, skipping (failing
// under CI, whose .ci/run installs them) when missing.
func flipsScript(t *testing.T) (node, script string) {
	t.Helper()
	dir, _ := filepath.Abs(filepath.Join("..", "..", "tools", "interop"))
	missing := func(what string) {
		msg := "the ledger flip sweep needs " + what + " (install with: cd tools/interop && npm ci)"
		if os.Getenv("CI") == "true" {
			t.Fatal(msg)
		}
		t.Skip(msg)
	}
	node, err := exec.LookPath("node")
	if err != nil {
		missing("node on the PATH")
	}
	if _, err := os.Stat(filepath.Join(dir, "node_modules", "@duckdb", "node-api", "package.json")); err != nil {
		missing("the npm package @duckdb/node-api")
	}
	return node, filepath.Join(dir, "flips.mjs")
}
