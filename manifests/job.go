package manifests

import (
	"errors"
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
	// SpecHash is the hex SHA-256 over version.Numeric and the canonical
	// spec (Spec).
	SpecHash string
	// AutoStates is the number of states chosen by states: auto (the
	// canonical spec holds it as states); 0 when the manifest gave it.
	AutoStates int

	// canonical is the canonical spec of a job without a sweep; a sweep
	// point's is rebuilt by Spec, so that a large sweep does not keep one
	// per point.
	canonical []byte

	// src rebuilds the job's checked spec when Build asks for it, so that
	// a large sweep keeps one spec per process, not one per sweep point.
	src *jobSource
}

// jobSource is what a job's checked spec is rebuilt from, shared by all
// the jobs of one process.
type jobSource struct {
	// fixed is the checked spec of a process without a sweep; it is only
	// read once made.
	fixed *processSpec
	// written is a swept process as written (never checked itself): each
	// point clones it, sets the point's values and checks the clone.
	written *processSpec
}

// checked returns the job's checked spec: for a sweep point, a fresh copy
// built and checked exactly as when the manifest was parsed.
func (j Job) checked() (*processSpec, error) {
	switch {
	case j.src == nil:
		return nil, fmt.Errorf("manifests: job %s/%d was not made by Parse or ParseSpec", j.Process, j.Point)
	case j.src.fixed != nil:
		return j.src.fixed, nil
	}
	q := j.src.written.clone()
	q.setPoint(j.Point)
	r := &reporter{}
	q.autoN = j.AutoStates
	if !q.check(r) {
		// The point passed this check when the manifest was parsed.
		return nil, fmt.Errorf("manifests: job %s/%d no longer checks: %v", j.Process, j.Point, r.err())
	}
	return q, nil
}

// AgeModel is a process whose chain changes with age (kind lifecycle): one
// transition matrix per move between consecutive ages.
type AgeModel interface {
	DiscretizeAges(solver.Settings) (*solver.AgeChain, error)
	// DiagnoseAges compares each transition of a with the truth: entry t
	// holds the conditional moments of the move from age t to age t+1 in
	// every age-t state, and as unconditional moments those of the
	// marginal law at age t+1 (Autocorr: Corr(z_t, z_{t+1})); Stationary
	// is nil.
	DiagnoseAges(a *solver.AgeChain) []solver.Diagnostics
}

// Problem is a job's input to the solver: the process, how to discretize
// it, and the baseline method its diagnostics compare against.
type Problem struct {
	// Model is the process of a time-invariant kind; nil for a life cycle.
	Model Model
	// AgeModel is the process of kind lifecycle; nil for the other kinds.
	AgeModel AgeModel
	Settings solver.Settings
	// Baseline holds the comparison settings; nil when the process asks
	// for no comparison (compare: none).
	Baseline *solver.Settings
	// DefaultWidth reports that Settings.Width was not given but follows
	// the default rule √(N−1), so that grid advice lets it follow N.
	DefaultWidth bool
}

// Build returns the solver inputs of the job. It fails only for a Job not
// made by this package.
func (j Job) Build() (Problem, error) {
	q, err := j.checked()
	if err != nil {
		return Problem{}, err
	}
	return q.problem(), nil
}

// problem returns the solver inputs of a checked process.
func (q *processSpec) problem() Problem {
	p := Problem{Settings: q.settings, DefaultWidth: q.defaultWidth()}
	if ak, ok := q.spec.(ageKind); ok && ak.ageModel() != nil {
		p.AgeModel = ak.ageModel()
	} else {
		p.Model = q.spec.model()
	}
	if q.baseline != nil {
		b := *q.baseline
		p.Baseline = &b
	}
	return p
}

// errAgeModel is returned for a single chain of a life-cycle process.
var errAgeModel = errors.New("manifests: a life-cycle process has one chain per age: use Solve or AgeModel")

// Chain discretizes the process with the job's settings. A life-cycle
// process has no single chain: see AgeModel.
func (p Problem) Chain() (*solver.Chain, error) {
	if p.Model == nil {
		return nil, errAgeModel
	}
	return p.Model.Discretize(p.Settings)
}

// BaselineChain discretizes the process with the baseline method; it
// returns nil and no error when there is no baseline.
func (p Problem) BaselineChain() (*solver.Chain, error) {
	if p.Baseline == nil {
		return nil, nil
	}
	if p.Model == nil {
		return nil, errAgeModel
	}
	return p.Model.Discretize(*p.Baseline)
}

// Truth returns the exact moments the chains are judged against (for
// vector processes, of the first component); nil for a life cycle.
func (p Problem) Truth() solver.Truth { return p.Model }

// Solution is a solved job: the chain, its diagnostics and, when the job
// has a baseline, the baseline chain and its diagnostics. A life-cycle job
// fills the Ages fields instead of Chain, Diagnostics, Baseline and
// BaselineDiagnostics. All fields are plain data (the cache stores them).
type Solution struct {
	Chain               *solver.Chain
	Diagnostics         solver.Diagnostics
	Baseline            *solver.Chain
	BaselineDiagnostics *solver.Diagnostics

	// Vector and BaselineVector compare the chains with a vector process
	// (kinds var, ar1-volatility, product) as a whole: conditional mean vectors and
	// covariance matrices, stationary covariances. Diagnostics still
	// compares the first component. Nil for univariate kinds.
	Vector, BaselineVector *solver.VectorDiagnostics

	// Ages is the chain of a life-cycle process and AgeDiagnostics the
	// comparison of each of its transitions with the truth (see
	// AgeModel.DiagnoseAges); BaselineAges and BaselineAgeDiagnostics the
	// same for the baseline method. Nil for time-invariant kinds.
	Ages                   *solver.AgeChain
	AgeDiagnostics         []solver.Diagnostics
	BaselineAges           *solver.AgeChain
	BaselineAgeDiagnostics []solver.Diagnostics
}

// Method returns the method of the primary chain (of every age for a life
// cycle).
func (s Solution) Method() solver.Method {
	if s.Ages != nil {
		return s.Ages.Method
	}
	return s.Chain.Method
}

// Dim returns the dimension of the state vector.
func (s Solution) Dim() int {
	if s.Ages != nil {
		return s.Ages.Ages[0].Dim
	}
	return s.Chain.Dim
}

// States returns the number of states of the chain (for a life cycle,
// summed over the ages that have a transition).
func (s Solution) States() int {
	if s.Ages == nil {
		return s.Chain.States()
	}
	var n int
	for _, c := range s.Ages.Ages {
		n += c.States()
	}
	return n
}

// Fallbacks counts the states that matched fewer moments than requested
// (for a life cycle, over every age).
func (s Solution) Fallbacks() int {
	if s.Ages == nil {
		return s.Chain.Fallbacks()
	}
	var n int
	for _, c := range s.Ages.Ages {
		n += c.Fallbacks()
	}
	return n
}

// Solve builds both chains and their diagnostics.
func (p Problem) Solve() (Solution, error) {
	if p.AgeModel != nil {
		return p.solveAges()
	}
	c, err := p.Chain()
	if err != nil {
		return Solution{}, err
	}
	s := Solution{Chain: c, Diagnostics: solver.Diagnose(c, p.Model)}
	vt, vector := p.Model.(solver.VectorTruth)
	if vector {
		v := solver.DiagnoseVector(c, vt)
		s.Vector = &v
	}
	if p.Baseline != nil {
		b, err := p.BaselineChain()
		if err != nil {
			return Solution{}, fmt.Errorf("baseline %s: %w", p.Baseline.Method, err)
		}
		d := solver.Diagnose(b, p.Model)
		s.Baseline, s.BaselineDiagnostics = b, &d
		if vector {
			v := solver.DiagnoseVector(b, vt)
			s.BaselineVector = &v
		}
	}
	return s, nil
}

func (p Problem) solveAges() (Solution, error) {
	a, err := p.AgeModel.DiscretizeAges(p.Settings)
	if err != nil {
		return Solution{}, err
	}
	s := Solution{Ages: a, AgeDiagnostics: p.AgeModel.DiagnoseAges(a)}
	if p.Baseline != nil {
		b, err := p.AgeModel.DiscretizeAges(*p.Baseline)
		if err != nil {
			return Solution{}, fmt.Errorf("baseline %s: %w", p.Baseline.Method, err)
		}
		s.BaselineAges, s.BaselineAgeDiagnostics = b, p.AgeModel.DiagnoseAges(b)
	}
	return s, nil
}

// expand turns a checked process into its jobs, one per sweep point,
// validating every point. It returns nil if any point is invalid. The jobs
// keep their canonical spec, hash and swept values; the checked spec of a
// sweep point is rebuilt by Build (see Job.checked).
func expand(r *reporter, p *processSpec) []Job {
	if p.spec == nil {
		return nil
	}
	if p.sweep == nil {
		q := p.clone()
		if !q.check(r) || !q.resolveAuto(r) {
			return nil
		}
		return []Job{newJob(q, 0, nil, &jobSource{fixed: q})}
	}
	s := p.sweep
	if s.broken {
		return nil
	}
	rows := 1
	if s.draws != nil {
		rows = s.draws.numRows()
	}
	n := rows
	for _, a := range s.axes {
		n *= len(a.values)
	}
	src := &jobSource{written: p}
	jobs := make([]Job, 0, n)
	var flat []Param // backing array of every point's Params
	good := true
	for point := 0; point < n; point++ {
		q := p.clone()
		params := q.setPoint(point)
		if !q.check(r) || !q.resolveAuto(r) {
			good = false
			continue
		}
		if good {
			if flat == nil {
				flat = make([]Param, 0, n*len(params))
			}
			var own []Param
			if len(params) > 0 {
				at := len(flat)
				flat = append(flat, params...)
				own = flat[at:len(flat):len(flat)]
			}
			j := newJob(q, point, own, src)
			j.canonical = nil
			jobs = append(jobs, j)
		}
	}
	if !good {
		return nil
	}
	if s.draws != nil {
		s.draws.compact()
	}
	return jobs
}

// setPoint sets the swept parameters of a clone of a swept process to
// their values at the given point and returns those values, sorted by
// name.
func (q *processSpec) setPoint(point int) []Param {
	s := q.sweep
	cells := 1
	for _, a := range s.axes {
		cells *= len(a.values)
	}
	_, refs := q.params()
	params := make([]Param, 0, len(s.axes)+drawColumns(s.draws))
	set := func(name string, v num) {
		*refs[name] = v
		params = append(params, Param{Name: name, Value: v.v})
	}
	if s.draws != nil {
		for c, name := range s.draws.columns {
			set(name, s.draws.cell(point/cells, c))
		}
	}
	idx := make([]int, len(s.axes))
	rem := point % cells
	for k := len(s.axes) - 1; k >= 0; k-- {
		idx[k] = rem % len(s.axes[k].values)
		rem /= len(s.axes[k].values)
	}
	for k, a := range s.axes {
		set(a.name, a.values[idx[k]])
	}
	sort.Slice(params, func(i, j int) bool { return params[i].Name < params[j].Name })
	return params
}

func drawColumns(t *drawTable) int {
	if t == nil {
		return 0
	}
	return len(t.columns)
}

func newJob(q *processSpec, point int, params []Param, src *jobSource) Job {
	canon := encodeCanonical(q.canonicalSpec())
	return Job{Process: q.name.v, Kind: q.kind.v, Point: point, Params: params,
		canonical: canon, SpecHash: SpecHash(canon), AutoStates: q.autoN, src: src}
}

// Spec returns the job's canonical spec (docs/HASHES.md): JSON with sorted
// keys, normalised numbers and every default filled in. A sweep point's is
// rebuilt from the process and checked against the job's spec hash. It
// fails only for a Job not made by this package.
func (j Job) Spec() ([]byte, error) {
	if j.canonical != nil {
		return j.canonical, nil
	}
	q, err := j.checked()
	if err != nil {
		return nil, err
	}
	canon := encodeCanonical(q.canonicalSpec())
	if SpecHash(canon) != j.SpecHash {
		return nil, fmt.Errorf("manifests: job %s/%d rebuilt a spec that does not match its spec hash", j.Process, j.Point)
	}
	return canon, nil
}
