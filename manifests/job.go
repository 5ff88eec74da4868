package manifests

import (
	"fmt"
	"sort"

	"gridstage/solver"
)

// Param is one swept parameter's value at a sweep point.
type Param struct {
	Name  string // as in the manifest: "rho", "states", "innovation.nu", …
	Value float64
}

// Job is one process at one sweep point: the unit of work, of caching and
// of provenance.
type Job struct {
	// Process is the process's name and Kind its kind.
	Process, Kind string
	// Point numbers the process's sweep points from 0 (0 without a sweep).
	Point int
	// Params holds the swept values at this point, sorted by name; nil
	// without a sweep.
	Params []Param
	// Canonical is the canonical spec (docs/HASHES.md): JSON with sorted
	// keys, normalised numbers and every default filled in.
	Canonical []byte
	// SpecHash is the hex SHA-256 over version.Numeric and Canonical.
	SpecHash string

	spec *processSpec
}

// Problem is a job's input to the solver: the process, how to discretize
// it, and the baseline method its diagnostics compare against.
type Problem struct {
	Model    Model
	Settings solver.Settings
	// Baseline holds the comparison settings; nil when the process asks
	// for no comparison (compare: none).
	Baseline *solver.Settings
}

// Build returns the solver inputs of the job. It fails only for a Job not
// made by this package.
func (j Job) Build() (Problem, error) {
	if j.spec == nil {
		return Problem{}, fmt.Errorf("manifests: job %s/%d was not made by Parse or ParseSpec", j.Process, j.Point)
	}
	p := Problem{Model: j.spec.spec.model(), Settings: j.spec.settings}
	if j.spec.baseline != nil {
		b := *j.spec.baseline
		p.Baseline = &b
	}
	return p, nil
}

// Chain discretizes the process with the job's settings.
func (p Problem) Chain() (*solver.Chain, error) { return p.Model.Discretize(p.Settings) }

// BaselineChain discretizes the process with the baseline method; it
// returns nil and no error when there is no baseline.
func (p Problem) BaselineChain() (*solver.Chain, error) {
	if p.Baseline == nil {
		return nil, nil
	}
	return p.Model.Discretize(*p.Baseline)
}

// Truth returns the exact moments the chains are judged against.
func (p Problem) Truth() solver.Truth { return p.Model }

// Solution is a solved job: the chain, its diagnostics and, when the job
// has a baseline, the baseline chain and its diagnostics.
type Solution struct {
	Chain               *solver.Chain
	Diagnostics         solver.Diagnostics
	Baseline            *solver.Chain
	BaselineDiagnostics *solver.Diagnostics
}

// Solve builds both chains and their diagnostics.
func (p Problem) Solve() (Solution, error) {
	c, err := p.Chain()
	if err != nil {
		return Solution{}, err
	}
	s := Solution{Chain: c, Diagnostics: solver.Diagnose(c, p.Model)}
	if p.Baseline != nil {
		b, err := p.BaselineChain()
		if err != nil {
			return Solution{}, fmt.Errorf("baseline %s: %w", p.Baseline.Method, err)
		}
		d := solver.Diagnose(b, p.Model)
		s.Baseline, s.BaselineDiagnostics = b, &d
	}
	return s, nil
}

// expand turns a checked process into its jobs, one per sweep point,
// validating every point. It returns nil if any point is invalid.
func expand(r *reporter, p *processSpec) []Job {
	if p.spec == nil {
		return nil
	}
	if p.sweep == nil {
		q := p.clone()
		if !q.check(r) {
			return nil
		}
		return []Job{newJob(q, 0, nil)}
	}
	s := p.sweep
	if s.broken {
		return nil
	}
	rows := 1
	if s.draws != nil {
		rows = len(s.draws.rows)
	}
	cells := 1
	for _, a := range s.axes {
		cells *= len(a.values)
	}
	jobs := make([]Job, 0, rows*cells)
	good := true
	idx := make([]int, len(s.axes))
	for point := 0; point < rows*cells; point++ {
		q := p.clone()
		_, refs := q.params()
		var params []Param
		set := func(name string, v num) {
			*refs[name] = v
			params = append(params, Param{Name: name, Value: v.v})
		}
		if s.draws != nil {
			for c, name := range s.draws.columns {
				set(name, s.draws.rows[point/cells][c])
			}
		}
		rem := point % cells
		for k := len(s.axes) - 1; k >= 0; k-- {
			idx[k] = rem % len(s.axes[k].values)
			rem /= len(s.axes[k].values)
		}
		for k, a := range s.axes {
			set(a.name, a.values[idx[k]])
		}
		sort.Slice(params, func(i, j int) bool { return params[i].Name < params[j].Name })
		if !q.check(r) {
			good = false
			continue
		}
		if good {
			jobs = append(jobs, newJob(q, point, params))
		}
	}
	if !good {
		return nil
	}
	return jobs
}

func newJob(q *processSpec, point int, params []Param) Job {
	canon := encodeCanonical(q.canonicalSpec())
	return Job{Process: q.name.v, Kind: q.kind.v, Point: point, Params: params,
		Canonical: canon, SpecHash: SpecHash(canon), spec: q}
}
