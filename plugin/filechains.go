package plugin

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"sync"

	"gridstage/formats"
	"gridstage/formats/arrays"
	"gridstage/solver"
)

// FileLoader reads chains from gridstage output sets (package formats). For
// each points file it recomputes the file's content hash once, reads the
// set (the reader checks that every point's chain hash matches the points
// table), and keeps the records; each Load then checks the reference's file
// hash and recomputes the chain hash of the point it asks for. The zero
// value is ready to use and safe for concurrent use.
type FileLoader struct {
	mu   sync.Mutex
	sets map[string]*loadedSet
}

var _ ChainLoader = (*FileLoader)(nil)

type loadedSet struct {
	fileHash    string
	tableHashes string // JSON object of every table's content hash; "" until asked for
	header      formats.Header
	points      map[int][]formats.Record
}

// Load returns the chain ref names, or an error wrapping ErrChainMismatch
// when the file or the chain no longer has the reference's hashes.
func (l *FileLoader) Load(ctx context.Context, ref ChainRef) (*ChainData, error) {
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	set, err := l.set(ref.Path)
	if err != nil {
		return nil, err
	}
	if ref.FileHash != "" && set.fileHash != ref.FileHash {
		return nil, MismatchHash("content hash", ref.Path, ref.FileHash, set.fileHash)
	}
	recs, ok := set.points[ref.Point]
	if !ok {
		return nil, fmt.Errorf("%w: %s has no sweep point %d", ErrChainMismatch, ref.Path, ref.Point)
	}
	if got := formats.ChainHash(recs); got != ref.ChainHash {
		return nil, MismatchHash(fmt.Sprintf("chain hash of point %d", ref.Point), ref.Path, ref.ChainHash, got)
	}
	if len(recs) != 1 {
		return nil, fmt.Errorf("%s point %d is a life-cycle chain with %d ages; stages receive time-invariant chains only", ref.Path, ref.Point, len(recs))
	}
	r := recs[0]
	d := &ChainData{Dim: r.Chain.Dim, Grid: r.Chain.Grid, Transition: r.Chain.Transition, Matched: r.Chain.Matched, Initial: r.Initial, Spec: r.Spec}
	return d, nil
}

func (l *FileLoader) set(path string) (*loadedSet, error) {
	l.mu.Lock()
	defer l.mu.Unlock()
	if s, ok := l.sets[path]; ok {
		return s, nil
	}
	sref, ok := formats.RefOf(path)
	if !ok {
		return nil, fmt.Errorf("%s is not a gridstage points file (<process>.points.parquet or .arrow)", path)
	}
	rep, err := formats.Verify(path)
	if err != nil {
		return nil, fmt.Errorf("%w: %v", ErrChainMismatch, err)
	}
	s := &loadedSet{fileHash: rep.Files[0].ContentHash, points: map[int][]formats.Record{}}
	r, err := formats.Open(sref, nil)
	if err != nil {
		return nil, fmt.Errorf("%w: %v", ErrChainMismatch, err)
	}
	defer r.Close()
	s.header = r.Header
	for {
		rec, err := r.Next()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			return nil, fmt.Errorf("%w: %v", ErrChainMismatch, err)
		}
		s.points[rec.Point] = append(s.points[rec.Point], rec)
	}
	if l.sets == nil {
		l.sets = map[string]*loadedSet{}
	}
	l.sets[path] = s
	return s, nil
}

// Complete verifies the chain ref names (its file, and its chain hash
// recomputed from the numbers; any life-cycle chain too) and returns the
// reference as the file describes it: process, spec hash, manifest hash,
// the file's content hash and the numeric version the chain was solved
// under. Path, Point and ChainHash are kept; FileHash, when set, must
// match.
func (l *FileLoader) Complete(ctx context.Context, ref ChainRef) (ChainRef, error) {
	if err := ctx.Err(); err != nil {
		return ref, err
	}
	set, err := l.set(ref.Path)
	if err != nil {
		return ref, err
	}
	if ref.FileHash != "" && set.fileHash != ref.FileHash {
		return ref, MismatchHash("content hash", ref.Path, ref.FileHash, set.fileHash)
	}
	recs, ok := set.points[ref.Point]
	if !ok {
		return ref, fmt.Errorf("%w: %s has no sweep point %d", ErrChainMismatch, ref.Path, ref.Point)
	}
	if got := formats.ChainHash(recs); got != ref.ChainHash {
		return ref, MismatchHash(fmt.Sprintf("chain hash of point %d", ref.Point), ref.Path, ref.ChainHash, got)
	}
	out := ref
	out.Process, out.SpecHash, out.ManifestHash = set.header.Process, recs[0].SpecHash, set.header.ManifestHash
	out.FileHash, out.Numeric = set.fileHash, set.header.Numeric
	if len(recs[0].Params) > 0 {
		out.Params = recs[0].Params
	}
	return out, nil
}

// DataHash returns the chain hash (docs/HASHES.md) of a time-invariant
// chain's numbers, as formats computes it for a point with one age.
func DataHash(d *ChainData) string {
	c := &solver.Chain{Dim: d.Dim, Grid: d.Grid, Transition: d.Transition, Matched: d.Matched}
	return formats.ChainHash([]formats.Record{{Age: 0, Chain: c, Initial: d.Initial}})
}

// VerifyData checks numbers that arrived inline against the reference's
// chain hash.
func VerifyData(ref ChainRef, d *ChainData) error {
	if d.Dim < 1 || len(d.Grid)%d.Dim != 0 {
		return fmt.Errorf("chain %s came inline with %d grid values for dimension %d", ref.ChainHash, len(d.Grid), d.Dim)
	}
	n := d.States()
	if len(d.Transition) != n*n || len(d.Matched) != n {
		return fmt.Errorf("chain %s came inline with %d states but %d transition entries and %d matched counts", ref.ChainHash, n, len(d.Transition), len(d.Matched))
	}
	if got := DataHash(d); got != ref.ChainHash {
		return MismatchHash("chain hash", "the inline chain", ref.ChainHash, got)
	}
	return nil
}

// PointArrays returns the sweep point ref names as the named arrays that
// gridstage arrays writes to .npz and .mat files (package formats/arrays;
// docs/FORMATS.md, "Arrays for other languages"), after the checks of
// Load. The content hashes stored with them are those of the set's tables,
// each recomputed from its file.
func (l *FileLoader) PointArrays(ctx context.Context, ref ChainRef) ([]arrays.Array, error) {
	if _, err := l.Load(ctx, ref); err != nil {
		return nil, err
	}
	set, err := l.set(ref.Path)
	if err != nil {
		return nil, err
	}
	hashes, err := l.tableHashes(ref.Path, set)
	if err != nil {
		return nil, err
	}
	recs := set.points[ref.Point]
	p := &arrays.Point{Header: set.header, Records: recs, ChainHash: ref.ChainHash}
	return p.Arrays(hashes)
}

// tableHashes returns the JSON object of the content hashes of the set's
// tables by table name, verifying each file once.
func (l *FileLoader) tableHashes(path string, set *loadedSet) (string, error) {
	l.mu.Lock()
	defer l.mu.Unlock()
	if set.tableHashes != "" {
		return set.tableHashes, nil
	}
	sref, _ := formats.RefOf(path)
	hashes := map[string]string{}
	for _, table := range formats.Tables {
		p := sref.Path(table)
		if _, err := os.Stat(p); errors.Is(err, os.ErrNotExist) {
			continue
		}
		rep, err := formats.Verify(p)
		if err != nil {
			return "", fmt.Errorf("%w: %v", ErrChainMismatch, err)
		}
		hashes[table] = rep.Files[0].ContentHash
	}
	b, err := json.Marshal(hashes) // keys sorted
	if err != nil {
		return "", err
	}
	set.tableHashes = string(b)
	return set.tableHashes, nil
}
