package chainstage

import (
	"context"
	"path/filepath"

	"gridstage/batch"
	"gridstage/batch/cache"
	"gridstage/formats"
	"gridstage/manifests"
	"gridstage/plugin"
)

// WriteSets runs m with the engine behind `gridstage run` (worker pool, and
// the cache named by GRIDSTAGE_CACHE when set) into dir and returns one
// reference per chain, in manifest order.
func WriteSets(ctx context.Context, m *manifests.Manifest, dir string) ([]plugin.ChainRef, error) {
	// Force: the references returned below come from the sets written now.
	opt := batch.Options{Out: dir, Force: true}
	if d := cache.Dir(""); d != "" {
		if c, err := cache.Open(d); err == nil {
			opt.Cache = c
		}
	}
	opt.PointList = true // the chain references name every point
	res, err := batch.Run(ctx, m, opt)
	if err != nil {
		return nil, err
	}
	params := map[string]map[int]map[string]float64{}
	for _, j := range m.Jobs {
		if params[j.Process] == nil {
			params[j.Process] = map[int]map[string]float64{}
		}
		params[j.Process][j.Point] = batch.Params(j.Params).Map()
	}
	var refs []plugin.ChainRef
	for _, set := range res.Sets {
		var points formats.File
		for _, f := range set.Files {
			if f.Table == formats.TablePoints {
				points = f
			}
		}
		process, _, _, _ := formats.ParseFileName(filepath.Base(points.Path))
		for _, ph := range set.Points {
			vals := params[process][ph.Point]
			if vals == nil {
				vals = map[string]float64{}
			}
			refs = append(refs, plugin.ChainRef{
				Path: points.Path, Process: process, Point: ph.Point, ChainHash: ph.ChainHash, SpecHash: ph.SpecHash,
				ManifestHash: m.Hash, FileHash: points.ContentHash, Params: vals,
			})
		}
	}
	return refs, nil
}
