package formats

import (
	"bytes"
	"os"
	"path/filepath"
	"testing"

	"github.com/apache/arrow-go/v18/arrow/memory"
)

// TestRoundTrip writes sets in both formats and reads them back: every
// number must come back bit for bit (exact equality is right here: nothing
// is computed, only stored), and every Arrow buffer must be released.
func TestRoundTrip(t *testing.T) {
	cases := []struct {
		name string
		set  func(testing.TB) *Set
		rows int
	}{
		{"sweep", func(t testing.TB) *Set { return sweepSet(t, 4, 1, 7) }, 0},
		{"life-cycle", func(t testing.TB) *Set { return sweepSet(t, 3, 3, 5) }, 0},
		// Small batches split chains across row groups and record batches.
		{"small-batches", func(t testing.TB) *Set { return sweepSet(t, 3, 2, 9) }, 10},
		{"two-dimensional", productSet, 0},
		{"age-varying", lifeCycleSet, 0},
		{"vector", vectorSet, 0},
		{"vector-small-batches", vectorSet, 7},
	}
	for _, tc := range cases {
		for _, f := range []Format{Parquet, Arrow} {
			t.Run(tc.name+"/"+f.String(), func(t *testing.T) {
				mem := memory.NewCheckedAllocator(memory.NewGoAllocator())
				defer mem.AssertSize(t, 0)
				want := tc.set(t)
				dir := t.TempDir()
				res, err := Write(dir, want, Options{Format: f, Allocator: mem, BatchRows: tc.rows})
				if err != nil {
					t.Fatal(err)
				}
				if len(res.Files) != len(Tables) {
					t.Fatalf("wrote %d files, want %d", len(res.Files), len(Tables))
				}
				got, err := Read(SetRef{Dir: dir, Process: want.Process, Format: f}, mem)
				if err != nil {
					t.Fatal(err)
				}
				if got.Run != want.Run || got.Kind != want.Kind || got.Dim != want.Dim || got.ManifestHash != want.ManifestHash {
					t.Errorf("header %+v, want %+v", got.Header, want.Header)
				}
				if len(got.Records) != len(want.Records) {
					t.Fatalf("read %d records, want %d", len(got.Records), len(want.Records))
				}
				for i := range want.Records {
					if d := diffRecords(&want.Records[i], &got.Records[i]); d != "" {
						t.Fatalf("record %d differs in %s", i, d)
					}
				}
				for _, p := range res.Points {
					var ages []Record
					for _, r := range want.Records {
						if r.Point == p.Point {
							ages = append(ages, r)
						}
					}
					if h := ChainHash(ages); h != p.ChainHash {
						t.Errorf("point %d: ChainHash %s, writer reported %s", p.Point, h, p.ChainHash)
					}
				}
				rep, err := verify(dir, mem)
				if err != nil {
					t.Fatalf("verify: %v", err)
				}
				if rep.Sets != 1 || len(rep.Files) != len(Tables) || len(rep.Warnings) != 0 {
					t.Errorf("verify report %+v", rep)
				}
			})
		}
	}
}

// TestDeterministicBytes writes the same set twice: the files must be
// byte-identical, and the content hashes of the Parquet and Arrow encodings
// must agree (the hash is over values, not bytes).
func TestDeterministicBytes(t *testing.T) {
	set := sweepSet(t, 3, 2, 6)
	hashes := map[Format]map[string]string{}
	for _, f := range []Format{Parquet, Arrow} {
		var first []File
		for run := 0; run < 2; run++ {
			dir := t.TempDir()
			res, err := Write(dir, set, Options{Format: f})
			if err != nil {
				t.Fatal(err)
			}
			if run == 0 {
				first = res.Files
				continue
			}
			for i, file := range res.Files {
				if !bytes.Equal(readFile(t, first[i].Path), readFile(t, file.Path)) {
					t.Errorf("%s: two writes of the same set differ", filepath.Base(file.Path))
				}
			}
		}
		hashes[f] = map[string]string{}
		for _, file := range first {
			hashes[f][file.Table] = file.ContentHash
		}
	}
	for _, table := range Tables {
		if hashes[Parquet][table] != hashes[Arrow][table] {
			t.Errorf("%s: content hash %s in Parquet, %s in Arrow", table, hashes[Parquet][table], hashes[Arrow][table])
		}
	}
}

// TestCreatedByPinned checks that the Parquet footer names gridstage, not
// the library version.
func TestCreatedByPinned(t *testing.T) {
	dir := t.TempDir()
	res, err := Write(dir, sweepSet(t, 1, 1, 3), Options{})
	if err != nil {
		t.Fatal(err)
	}
	b, err := os.ReadFile(res.Files[0].Path)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Contains(b, []byte(CreatedBy)) || bytes.Contains(b, []byte("parquet-go version")) {
		t.Errorf("footer does not carry the pinned created_by %q", CreatedBy)
	}
}
