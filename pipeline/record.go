package pipeline

import (
	"context"
	"fmt"
	"math"
	"path/filepath"
	"sort"
	"time"

	"gridstage/pipeline/lineage"
	"gridstage/plugin"
)

// Entry is one estimate to record: who computed it, what was asked, the
// chains it used (in the order it used them) and the values.
type Entry struct {
	Pipeline     string
	Stage        string // name of the code that computed it
	StageVersion string
	Model        string
	Params       map[string]float64
	Chains       []plugin.ChainRef // verified references, with Numeric filled
	Scalars      map[string]float64
	Vectors      map[string][]float64
}

// recordEntry writes e to <estimates>/<id>.json and returns the ledger rows
// for it: one per chain used, paths relative to the ledger's folder. This
// is what a pipeline does with every estimate a stage returns, and what
// RecordExternal does with an estimate computed elsewhere.
func recordEntry(ledger, estimates string, e Entry, now time.Time) (Written, []lineage.Record, error) {
	hashes := make([]string, len(e.Chains))
	for i, r := range e.Chains {
		hashes[i] = r.ChainHash
	}
	id := lineage.EstimateID(e.Stage, e.StageVersion, e.Model, e.Params, hashes, lineage.Values{Scalars: e.Scalars, Vectors: e.Vectors})
	path := filepath.Join(estimates, id+".json")
	chains := make([]plugin.ChainRef, len(e.Chains))
	for i, r := range e.Chains {
		chains[i] = r
		chains[i].Path = lineage.RelPath(ledger, r.Path)
	}
	if err := writeEstimate(path, estimateFile{
		ID: id, Pipeline: e.Pipeline, Stage: e.Stage, StageVersion: e.StageVersion, Model: e.Model,
		Params: e.Params, Paths: pathsNote, Chains: chains, Scalars: e.Scalars, Vectors: e.Vectors,
	}); err != nil {
		return Written{}, nil, err
	}
	var recs []lineage.Record
	for _, r := range e.Chains {
		recs = append(recs, lineage.Record{
			EstimateID: id, EstimatePath: lineage.RelPath(ledger, path), Pipeline: e.Pipeline, Stage: e.Stage,
			StageVersion: e.StageVersion, Model: e.Model, ChainHash: r.ChainHash, SpecHash: r.SpecHash,
			ManifestHash: r.ManifestHash, ChainPath: lineage.RelPath(ledger, r.Path), FileHash: r.FileHash,
			Process: r.Process, Point: r.Point, Time: now.UTC(), Numeric: r.Numeric,
		})
	}
	return Written{ID: id, Path: path, Stage: e.Stage, StageVersion: e.StageVersion, Model: e.Model,
		ChainHashes: hashes, Scalars: e.Scalars}, recs, nil
}

// pathsNote tells a reader of an estimate file where its chain paths start.
const pathsNote = "chain paths are relative to the lineage ledger's folder"

// RecordExternal records an estimate computed outside the stage protocol
// (a user's own program that read the chain files): it verifies every
// chain e names (the file's hashes and the chain hash recomputed from its
// numbers), completes the references from the files, writes the estimate
// to estimates/<id>.json beside the ledger and appends its rows to the
// ledger exactly as a pipeline does for a stage's estimate. e.Chains need
// Path, Point and ChainHash only.
func RecordExternal(ctx context.Context, ledger string, e Entry, loader *plugin.FileLoader, now time.Time) (Written, error) {
	switch {
	case e.Stage == "" || e.StageVersion == "":
		return Written{}, plugin.BadRequest("the estimate needs the name and version of the code that computed it")
	case len(e.Chains) == 0:
		return Written{}, plugin.BadRequest("the estimate names no chain it used")
	case len(e.Scalars) == 0 && len(e.Vectors) == 0:
		return Written{}, plugin.BadRequest("the estimate has no values")
	}
	if err := finiteValues(e.Scalars, e.Vectors); err != nil {
		return Written{}, plugin.BadRequest("%v", err)
	}
	for i, ref := range e.Chains {
		if ref.Path == "" || ref.ChainHash == "" {
			return Written{}, plugin.BadRequest("chain %d needs a path and a chain hash", i)
		}
		full, err := loader.Complete(ctx, ref)
		if err != nil {
			return Written{}, fmt.Errorf("chain %d (%s point %d) does not verify: %w", i, ref.Path, ref.Point, err)
		}
		e.Chains[i] = full
	}
	w, recs, err := recordEntry(ledger, filepath.Join(filepath.Dir(ledger), "estimates"), e, now)
	if err != nil {
		return Written{}, err
	}
	if err := lineage.Append(ledger, recs); err != nil {
		return Written{}, err
	}
	return w, nil
}

// finiteValues rejects values that are not finite: no non-finite number
// reaches JSON or the ledger.
func finiteValues(scalars map[string]float64, vectors map[string][]float64) error {
	for _, k := range sortedNames(scalars) {
		if v := scalars[k]; math.IsNaN(v) || math.IsInf(v, 0) {
			return fmt.Errorf("%s = %g; estimates must be finite", k, v)
		}
	}
	for _, k := range sortedNames(vectors) {
		for j, v := range vectors[k] {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return fmt.Errorf("%s[%d] = %g; estimates must be finite", k, j, v)
			}
		}
	}
	return nil
}

func sortedNames[V any](m map[string]V) []string {
	keys := make([]string, 0, len(m))
	for k := range m {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	return keys
}
