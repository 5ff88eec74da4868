package chainstage

import (
	"context"
	"fmt"

	"gridstage/formats"
	"gridstage/manifests"
	"gridstage/plugin"
)

// WriteSets solves every job of m, one process at a time and its sweep
// points in order, and writes each process as an output set in dir in the
// manifest's format. It returns one reference per chain.
//
// It is the stage's own minimal run loop (sequential, no cache). The
// `gridstage run` engine, with its worker pool and cache, can replace it
// through Stage.Write.
func WriteSets(ctx context.Context, m *manifests.Manifest, dir string) ([]plugin.ChainRef, error) {
	format := formats.Parquet
	if m.Output.Format == manifests.FormatArrow {
		format = formats.Arrow
	}
	var refs []plugin.ChainRef
	for _, p := range m.Processes {
		r, err := writeProcess(ctx, m, p, dir, format)
		if err != nil {
			return nil, err
		}
		refs = append(refs, r...)
	}
	return refs, nil
}

func writeProcess(ctx context.Context, m *manifests.Manifest, p manifests.Process, dir string, format formats.Format) ([]plugin.ChainRef, error) {
	var w *formats.Writer
	defer func() {
		if w != nil {
			w.Abort()
		}
	}()
	params := map[int]map[string]float64{}
	for _, ji := range p.Jobs {
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		job := m.Jobs[ji]
		prob, err := job.Build()
		if err != nil {
			return nil, err
		}
		sol, err := prob.Solve()
		if err != nil {
			return nil, fmt.Errorf("process %s point %d: %w", p.Name, job.Point, err)
		}
		if w == nil {
			h := formats.Header{Run: m.Run, Process: p.Name, Kind: p.Kind, Method: sol.Chain.Method.String(),
				Dim: sol.Chain.Dim, Params: p.Swept, ManifestHash: m.Hash}
			if w, err = formats.Create(dir, h, formats.Options{Format: format}); err != nil {
				return nil, err
			}
		}
		vals := map[string]float64{}
		for _, prm := range job.Params {
			vals[prm.Name] = prm.Value
		}
		params[job.Point] = vals
		rec := formats.Record{Point: job.Point, Params: vals, SpecHash: job.SpecHash, Spec: job.Canonical,
			Chain: sol.Chain, Diag: sol.Diagnostics, Baseline: sol.BaselineDiagnostics}
		if err := w.Append(rec); err != nil {
			return nil, err
		}
	}
	if w == nil {
		return nil, nil
	}
	res, err := w.Close()
	w = nil
	if err != nil {
		return nil, err
	}
	var points formats.File
	for _, f := range res.Files {
		if f.Table == formats.TablePoints {
			points = f
		}
	}
	var refs []plugin.ChainRef
	for _, ph := range res.Points {
		refs = append(refs, plugin.ChainRef{
			Path: points.Path, Process: p.Name, Point: ph.Point, ChainHash: ph.ChainHash, SpecHash: ph.SpecHash,
			ManifestHash: m.Hash, FileHash: points.ContentHash, Params: params[ph.Point],
		})
	}
	return refs, nil
}
