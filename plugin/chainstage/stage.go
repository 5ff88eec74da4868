// Package chainstage is gridstage as a stage: Discretize runs a run
// manifest or one canonical job spec, writes the chains as output sets
// (package formats) and returns references to them — the points file, the
// chain and spec hashes, the manifest hash and the file's content hash —
// optionally followed by each chain as Arrow IPC bytes.
package chainstage

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"os"
	"path/filepath"

	"gridstage/internal/version"
	"gridstage/manifests"
	"gridstage/plugin"
)

// Name is the stage name recorded in the lineage ledger.
const Name = "gridstage"

// Stage discretizes manifests and job specs.
type Stage struct {
	// Write runs the jobs of m into dir and returns a reference per chain;
	// nil means WriteSets (the engine of `gridstage run`).
	Write func(ctx context.Context, m *manifests.Manifest, dir string) ([]plugin.ChainRef, error)
	// Loader reads chains back for Arrow streaming; nil means a new
	// plugin.FileLoader.
	Loader plugin.ChainLoader
}

var _ plugin.Stage = (*Stage)(nil)

// Describe names the stage.
func (s *Stage) Describe(context.Context) (plugin.Description, error) {
	return plugin.Description{
		Name:             Name,
		Version:          version.Tool,
		ProtocolVersions: plugin.ProtocolVersions,
		Capabilities:     []string{plugin.CapDiscretize, plugin.CapArrowStream},
	}, nil
}

// Health is always ready: the stage needs nothing but its inputs.
func (s *Stage) Health(context.Context) error { return nil }

// Estimate is not offered by this stage.
func (s *Stage) Estimate(context.Context, plugin.EstimateRequest) ([]plugin.Estimate, error) {
	return nil, plugin.ErrUnsupported
}

// Discretize parses the manifest or job spec, writes its chains into
// req.OutDir (required) and returns their references. A manifest that does
// not validate is a bad request whose message lists every problem with its
// file, line and column.
func (s *Stage) Discretize(ctx context.Context, req plugin.DiscretizeRequest) (*plugin.Discretization, error) {
	if req.OutDir == "" {
		return nil, plugin.BadRequest("discretize needs an output folder")
	}
	var m *manifests.Manifest
	switch {
	case req.Manifest != nil:
		name := req.SourceName
		if name == "" {
			name = "manifest"
		}
		var err error
		m, err = manifests.Parse(bytes.NewReader(req.Manifest), name, filepath.Dir(name))
		if err != nil {
			var list manifests.ErrorList
			if errors.As(err, &list) {
				return nil, plugin.BadRequest("%s", list.Error())
			}
			return nil, err
		}
	case req.JobSpec != nil:
		job, err := manifests.ParseSpec(req.JobSpec)
		if err != nil {
			return nil, plugin.BadRequest("job spec: %v", err)
		}
		job.Process = "job-" + job.SpecHash[:12]
		m = &manifests.Manifest{Run: "job", Jobs: []manifests.Job{job},
			Processes: []manifests.Process{{Name: job.Process, Kind: job.Kind, Jobs: []int{0}}}}
	default:
		return nil, plugin.BadRequest("discretize needs a manifest or a job spec")
	}
	if err := os.MkdirAll(req.OutDir, 0o755); err != nil {
		return nil, fmt.Errorf("output folder: %w", err)
	}
	write := s.Write
	if write == nil {
		write = WriteSets
	}
	refs, err := write(ctx, m, req.OutDir)
	if err != nil {
		return nil, err
	}
	d := &plugin.Discretization{Chains: refs}
	if req.StreamArrow {
		loader := s.Loader
		if loader == nil {
			loader = &plugin.FileLoader{}
		}
		d.Arrow = map[string][]byte{}
		for _, ref := range refs {
			data, err := loader.Load(ctx, ref)
			if err != nil {
				return nil, fmt.Errorf("reading back chain %s: %w", ref.ChainHash, err)
			}
			if d.Arrow[ref.ChainHash], err = plugin.ChainArrow(ref, data, nil); err != nil {
				return nil, err
			}
		}
	}
	return d, nil
}
