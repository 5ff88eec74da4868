package pipeline

import (
	"context"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"slices"
	"sort"
	"strings"
	"time"

	"gridstage/formats/arrays"
	"gridstage/pipeline/lineage"
	"gridstage/plugin"
)

// Options tune a run. The zero value is usable except for GridCommand,
// which is needed when the pipeline file names no grid stage.
type Options struct {
	// GridCommand launches the grid stage when the pipeline file has no
	// grid section (gridstage passes its own executable and "serve").
	GridCommand []string
	// Loader reads chains by reference and verifies their hashes. The host
	// uses it to check every reference the grid stage returns and to inline
	// chains for stages with the chain-inline capability. Nil skips both
	// (and inline stages then fail).
	Loader plugin.ChainLoader
	// Timeout and StartTimeout override the pipeline file's when > 0.
	Timeout, StartTimeout time.Duration
	// Stderr receives a copy of every stage's stderr; nil discards it (the
	// last lines still appear in error messages).
	Stderr io.Writer
	// Now stamps ledger records; nil means lineage.Now.
	Now func() time.Time
}

// Result is what a run produced.
type Result struct {
	Chains    []plugin.ChainRef `json:"chains"`
	Estimates []Written         `json:"estimates"`
	Ledger    string            `json:"ledger"`
}

// Written is one estimate written to disk and recorded in the ledger.
type Written struct {
	ID           string             `json:"id"`
	Path         string             `json:"path"`
	Stage        string             `json:"stage"`
	StageVersion string             `json:"stage_version"`
	Model        string             `json:"model"`
	ChainHashes  []string           `json:"chain_hashes"`
	Scalars      map[string]float64 `json:"scalars"`
}

// Run executes the pipeline: discretize the manifest with the grid stage,
// then ask each downstream stage for its estimates, writing each estimate
// to <out>/estimates/<id>.json and appending its lineage to the ledger
// after each stage. Errors that come from bad input (the pipeline's
// requests, the manifest) wrap plugin.ErrBadRequest.
func Run(ctx context.Context, s *Spec, opt Options) (*Result, error) {
	h := &host{spec: s, opt: opt, res: &Result{Ledger: s.Ledger}}
	if opt.Timeout > 0 {
		s.Timeout = opt.Timeout
	}
	if opt.StartTimeout > 0 {
		s.StartTimeout = opt.StartTimeout
	}
	if h.opt.Now == nil {
		h.opt.Now = lineage.Now
	}
	manifest, err := os.ReadFile(s.Manifest)
	if err != nil {
		return nil, plugin.BadRequest("%s: manifest: cannot read %s", s.File, strings.TrimPrefix(err.Error(), "open "))
	}
	if err := h.discretize(ctx, manifest); err != nil {
		return h.res, err
	}
	for i := range s.Stages {
		if err := h.stage(ctx, &s.Stages[i]); err != nil {
			return h.res, err
		}
	}
	return h.res, nil
}

// completer is a chain loader that also reads a chain's full reference from
// its file (plugin.FileLoader).
type completer interface {
	Complete(context.Context, plugin.ChainRef) (plugin.ChainRef, error)
}

type host struct {
	spec *Spec
	opt  Options
	res  *Result
}

// startedStage is a started stage: a launched protocol stage (plugin.Process)
// or a file-contract stage (plugin.FileStage), which has no process
// between its runs.
type startedStage interface {
	Close()
	Explain(call string, err error) error
}

// launch starts a stage, checks its health and returns its description.
func (h *host) launch(ctx context.Context, st *StageSpec) (startedStage, plugin.Stage, plugin.Description, error) {
	if st.Kind == KindFiles {
		fs := &plugin.FileStage{Name: st.Name, Version: st.Version, Command: st.Command, Dir: h.spec.Dir,
			WorkRoot: filepath.Join(h.spec.Out, "work"), Timeout: h.spec.Timeout, Stderr: h.opt.Stderr}
		if a, ok := h.opt.Loader.(interface {
			PointArrays(context.Context, plugin.ChainRef) ([]arrays.Array, error)
		}); ok {
			fs.Arrays = a.PointArrays
		}
		if err := fs.Health(ctx); err != nil {
			return nil, nil, plugin.Description{}, err
		}
		d, err := fs.Describe(ctx)
		return fs, fs, d, err
	}
	p, stage, err := plugin.Launch(ctx, st.Command, plugin.LaunchOptions{
		Name: st.Name, StartTimeout: h.spec.StartTimeout, Dir: h.spec.Dir, Stderr: h.opt.Stderr,
	})
	if err != nil {
		return nil, nil, plugin.Description{}, err
	}
	cctx, cancel := context.WithTimeout(ctx, h.spec.Timeout)
	defer cancel()
	d, err := stage.Describe(cctx)
	if err == nil {
		err = stage.Health(cctx)
		if err != nil && !errors.As(err, new(*plugin.RemoteError)) {
			err = fmt.Errorf("stage %s is not ready: %w", st.Name, err)
			p.Close()
			return nil, nil, d, err
		}
	}
	if err != nil {
		err = p.Explain("Health", err)
		p.Close()
		return nil, nil, d, err
	}
	if d.Name == "" || d.Version == "" {
		p.Close()
		return nil, nil, d, fmt.Errorf("stage %s describes itself without a name or version (name %q, version %q)", st.Name, d.Name, d.Version)
	}
	return p, stage, d, nil
}

// discretize runs the grid stage on the manifest and checks every chain
// reference it returns.
func (h *host) discretize(ctx context.Context, manifest []byte) error {
	st := h.spec.Grid
	if st == nil {
		if len(h.opt.GridCommand) == 0 {
			return errors.New("pipeline: no grid stage command")
		}
		st = &StageSpec{Name: "grid", Command: h.opt.GridCommand}
	}
	p, stage, d, err := h.launch(ctx, st)
	if err != nil {
		return err
	}
	defer p.Close()
	if !d.Can(plugin.CapDiscretize) {
		return fmt.Errorf("stage %s (%s %s) cannot discretize: its capabilities are %s", st.Name, d.Name, d.Version, strings.Join(d.Capabilities, ", "))
	}
	cctx, cancel := context.WithTimeout(ctx, h.spec.Timeout)
	defer cancel()
	disc, err := stage.Discretize(cctx, plugin.DiscretizeRequest{
		Manifest: manifest, SourceName: h.spec.Manifest, OutDir: filepath.Join(h.spec.Out, "chains"),
	})
	if errors.Is(err, plugin.ErrBadRequest) {
		return err // the manifest's own errors, with file:line:column
	}
	if err != nil {
		return p.Explain("Discretize", err)
	}
	if len(disc.Chains) == 0 {
		return fmt.Errorf("stage %s returned no chains for %s", st.Name, h.spec.Manifest)
	}
	for i, ref := range disc.Chains {
		if ref.ChainHash == "" || ref.Path == "" || ref.SpecHash == "" {
			return fmt.Errorf("stage %s returned chain reference %d without a path, chain hash or spec hash", st.Name, i)
		}
		if h.opt.Loader != nil {
			if _, err := h.opt.Loader.Load(ctx, ref); err != nil {
				return fmt.Errorf("stage %s returned chain %s (%s point %d) that does not verify: %w", st.Name, ref.ChainHash, ref.Process, ref.Point, err)
			}
		}
		// The numeric version comes from the chain's file, which the
		// loader has verified; the spec hash the stage returned must be
		// the file's.
		if c, ok := h.opt.Loader.(completer); ok {
			full, err := c.Complete(ctx, ref)
			if err != nil {
				return fmt.Errorf("stage %s returned chain %s (%s point %d) that does not verify: %w", st.Name, ref.ChainHash, ref.Process, ref.Point, err)
			}
			if full.SpecHash != ref.SpecHash {
				return fmt.Errorf("stage %s returned chain %s (%s point %d) with spec hash %s; its file says %s", st.Name, ref.ChainHash, ref.Process, ref.Point, ref.SpecHash, full.SpecHash)
			}
			disc.Chains[i].Numeric = full.Numeric
		}
	}
	h.res.Chains = disc.Chains
	return nil
}

// stage runs one downstream stage's estimates, writes them and records
// their lineage.
func (h *host) stage(ctx context.Context, st *StageSpec) error {
	p, stage, d, err := h.launch(ctx, st)
	if err != nil {
		return err
	}
	defer p.Close()
	if !d.Can(plugin.CapEstimate) {
		return fmt.Errorf("stage %s (%s %s) cannot estimate: its capabilities are %s", st.Name, d.Name, d.Version, strings.Join(d.Capabilities, ", "))
	}
	var recs []lineage.Record
	var written []Written
	for i, es := range st.Estimates {
		field := fmt.Sprintf("%s:%d: stages %s estimates[%d]", h.spec.File, es.Line, st.Name, i)
		if len(d.Models) > 0 && !slices.Contains(d.Models, es.Model) {
			return plugin.BadRequest("%s: stage %s (%s) does not solve model %q (it solves %s)", field, st.Name, d.Name, es.Model, strings.Join(d.Models, ", "))
		}
		refs, err := h.chainsFor(es, field)
		if err != nil {
			return err
		}
		req := plugin.EstimateRequest{Model: es.Model, Params: es.Params}
		for _, ref := range refs {
			in := plugin.ChainInput{Ref: ref}
			if d.Can(plugin.CapChainInline) || d.Can(plugin.CapSensitivities) {
				if h.opt.Loader == nil {
					return fmt.Errorf("stage %s wants chains inline but this host has no chain reader", st.Name)
				}
				if in.Data, err = h.opt.Loader.Load(ctx, ref); err != nil {
					return err
				}
			}
			if d.Can(plugin.CapSensitivities) {
				if err := attachSensitivities(in.Data); err != nil {
					return fmt.Errorf("%s: stage %s asks for sensitivities of chain %s (%s point %d): %w", field, st.Name, ref.ChainHash, ref.Process, ref.Point, err)
				}
			}
			req.Chains = append(req.Chains, in)
		}
		// A files stage applies the timeout to each run of its program.
		cctx, cancel := ctx, context.CancelFunc(func() {})
		if st.Kind != KindFiles {
			cctx, cancel = context.WithTimeout(ctx, h.spec.Timeout)
		}
		ests, err := stage.Estimate(cctx, req)
		cancel()
		if err != nil {
			err = p.Explain("Estimate", err)
			if errors.Is(err, plugin.ErrBadRequest) {
				return fmt.Errorf("%s: %w", field, err)
			}
			return err
		}
		if err := check(st.Name, es.Model, refs, ests); err != nil {
			return err
		}
		for _, e := range ests {
			w, rs, err := h.write(d, es, refs, e)
			if err != nil {
				return err
			}
			written = append(written, w)
			recs = append(recs, rs...)
		}
	}
	if err := lineage.Append(h.spec.Ledger, recs); err != nil {
		return err
	}
	h.res.Estimates = append(h.res.Estimates, written...)
	return nil
}

// chainsFor returns the chains an estimate asks for.
func (h *host) chainsFor(es EstimateSpec, field string) ([]plugin.ChainRef, error) {
	if len(es.Processes) == 0 {
		return h.res.Chains, nil
	}
	var out []plugin.ChainRef
	for _, name := range es.Processes {
		n := 0
		for _, ref := range h.res.Chains {
			if ref.Process == name {
				out = append(out, ref)
				n++
			}
		}
		if n == 0 {
			var have []string
			for _, ref := range h.res.Chains {
				if !slices.Contains(have, ref.Process) {
					have = append(have, ref.Process)
				}
			}
			return nil, plugin.BadRequest("%s: process %q is not in the manifest (it has %s)", field, name, strings.Join(have, ", "))
		}
	}
	return out, nil
}

// check rejects replies that cannot be recorded truthfully: no estimates,
// estimates naming chains they were not given, chains left unused, values
// that are not finite.
func check(stage, model string, refs []plugin.ChainRef, ests []plugin.Estimate) error {
	if len(ests) == 0 {
		return fmt.Errorf("stage %s returned no estimates for model %s", stage, model)
	}
	given := map[string]bool{}
	for _, r := range refs {
		given[r.ChainHash] = false
	}
	for i, e := range ests {
		if e.Model != "" && e.Model != model {
			return fmt.Errorf("stage %s returned estimate %d for model %q when asked for %q", stage, i, e.Model, model)
		}
		if len(e.ChainHashes) == 0 {
			return fmt.Errorf("stage %s returned estimate %d without the hash of the chain it used", stage, i)
		}
		for _, c := range e.ChainHashes {
			if _, ok := given[c]; !ok {
				return fmt.Errorf("stage %s returned estimate %d naming chain %q, which it was not given", stage, i, c)
			}
			given[c] = true
		}
		if len(e.Scalars) == 0 && len(e.Vectors) == 0 {
			return fmt.Errorf("stage %s returned estimate %d with no values", stage, i)
		}
		for k, v := range e.Scalars {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return fmt.Errorf("stage %s returned estimate %d with %s = %g; estimates must be finite", stage, i, k, v)
			}
		}
		for k, vs := range e.Vectors {
			for j, v := range vs {
				if math.IsNaN(v) || math.IsInf(v, 0) {
					return fmt.Errorf("stage %s returned estimate %d with %s[%d] = %g; estimates must be finite", stage, i, k, j, v)
				}
			}
		}
	}
	var unused []string
	for c, used := range given {
		if !used {
			unused = append(unused, c)
		}
	}
	if len(unused) > 0 {
		sort.Strings(unused)
		return fmt.Errorf("stage %s returned no estimate using chain %s", stage, unused[0])
	}
	return nil
}

// write stores one estimate and returns its ledger records.
func (h *host) write(d plugin.Description, es EstimateSpec, refs []plugin.ChainRef, e plugin.Estimate) (Written, []lineage.Record, error) {
	byHash := map[string]plugin.ChainRef{}
	for _, r := range refs {
		if _, ok := byHash[r.ChainHash]; !ok {
			byHash[r.ChainHash] = r
		}
	}
	var used []plugin.ChainRef
	for _, c := range e.ChainHashes {
		used = append(used, byHash[c])
	}
	return recordEntry(h.spec.Ledger, filepath.Join(h.spec.Out, "estimates"), Entry{
		Pipeline: h.spec.Name, Stage: d.Name, StageVersion: d.Version, Model: es.Model, Params: es.Params,
		Chains: used, Scalars: e.Scalars, Vectors: e.Vectors,
	}, h.opt.Now())
}
