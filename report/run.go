package report

import (
	"fmt"
	"sort"
	"strings"

	"gridstage/report/figures"
	"gridstage/solver"
)

// Run is one gridstage output as the report shows it.
type Run struct {
	// Name is the run name from the manifest.
	Name string
	// Source is the path the run was read from.
	Source string
	// Tool is the gridstage version that wrote the output.
	Tool string
	// ManifestHash identifies the manifest; empty for chains not made from
	// a manifest. Manifest is the manifest's path as the run recorded it.
	ManifestHash, Manifest string
	// Jobs holds one entry per process.
	Jobs []Job
	// Checks are file-level checks (content hashes, completeness) made
	// while reading.
	Checks []Check
}

// Job is one process across the points of a sweep.
type Job struct {
	Process, Kind, Method string
	// Dim is the dimension of each state vector.
	Dim int
	// Params names the swept parameters, sorted.
	Params []string
	// Files lists the job's files with their content hashes.
	Files []File
	// Points holds the sweep points in index order.
	Points []Point
	// Advice is the grid advice for the job's fallback states, computed
	// for AdvicePoint, the point with the most states that fell back
	// (manifests.Problem.Advise); empty when none fell back.
	Advice      string
	AdvicePoint int
}

// File is one output file and its provenance.
type File struct {
	Name, Table, ContentHash string
}

// Point is one sweep point of a job.
type Point struct {
	// Index is the point's index in the sweep.
	Index int
	// Params holds the swept parameter values.
	Params map[string]float64
	// SpecHash identifies the canonical job spec; ChainHash the chain's
	// numbers (all ages).
	SpecHash, ChainHash string
	// Spec is the canonical job spec when the point was read from files;
	// ResolveLaws rebuilds the process from it.
	Spec []byte
	// Chains holds one chain per age, in age order; time-invariant
	// processes have one, at age 0.
	Chains []Chain
	// Final is the grid of a life-cycle point's last age, which no
	// transition leaves, and FinalAge its age; nil otherwise.
	Final    []float64
	FinalAge int
	// YearsPerPeriod is the length of a life cycle's model period in
	// years, when its spec gives one (years_per_period), else 0.
	YearsPerPeriod float64
}

// Chain is one chain with what its figures need.
type Chain struct {
	figures.Case
	// Age is the age of a life-cycle chain, 0 otherwise.
	Age int
	// Initial is the distribution at entry for life-cycle chains, or nil.
	Initial []float64
}

// Check is the outcome of one check on the files.
type Check struct {
	// Subject names what was checked, e.g. a file name.
	Subject string
	// OK reports success; Detail says what failed, in one sentence.
	OK     bool
	Detail string
}

// Describe names a point by its index and parameter values, e.g.
// "point 3 (rho=0.9, sigma=0.1)".
func (p Point) Describe() string {
	if len(p.Params) == 0 {
		return fmt.Sprintf("point %d", p.Index)
	}
	names := make([]string, 0, len(p.Params))
	for k := range p.Params {
		names = append(names, k)
	}
	sort.Strings(names)
	parts := make([]string, len(names))
	for i, k := range names {
		parts[i] = fmt.Sprintf("%s=%g", k, p.Params[k])
	}
	return fmt.Sprintf("point %d (%s)", p.Index, strings.Join(parts, ", "))
}

// LifeCycle reports whether the point is an age-varying chain: several
// ages, or a final grid.
func (p Point) LifeCycle() bool { return len(p.Chains) > 1 || p.Final != nil }

// AgeFigures returns the life-cycle figure's data for the point.
func (p Point) AgeFigures(label string) figures.LifeCycle {
	l := figures.LifeCycle{Label: label, YearsPerPeriod: p.YearsPerPeriod}
	for i, c := range p.Chains {
		l.Ages = append(l.Ages, float64(c.Age))
		l.Chains = append(l.Chains, c.Chain)
		if i == 0 {
			l.Initial, l.Units = c.Initial, c.Units
		}
	}
	if p.Final != nil {
		l.Final = p.Final
		l.Ages = append(l.Ages, float64(p.FinalAge))
	}
	return l
}

// Chains counts every chain of the run.
func (r Run) Chains() int {
	var n int
	for _, j := range r.Jobs {
		for _, p := range j.Points {
			n += len(p.Chains)
		}
	}
	return n
}

// ResolveLaws completes what the figures need of the true law of each of
// the point's chains (whether it is exactly normal, a vector process's
// stationary covariance) by rebuilding the process from Spec. Loading
// keeps only the stored moments, because rebuilding thousands of
// processes is slow and only drawn chains need it. Without a Spec it does
// nothing. The chains are shared with every copy of the point.
func (p Point) ResolveLaws() {
	if p.Spec == nil {
		return
	}
	l, truth := lawOf(p.Spec)
	for i := range p.Chains {
		c := &p.Chains[i]
		l.Mean, l.SD = c.Law.Mean, c.Law.SD
		c.Law = l
		c.Components = componentChecks(c.Case, truth)
	}
}

// componentChecks returns the checks of each coordinate after the first
// of a vector chain against its process (figures.Case.Components), or nil
// when the chain is univariate, its diagnostics describe a sum (a
// life-cycle product's age) or the process is unknown.
func componentChecks(c figures.Case, truth solver.VectorTruth) []*solver.Diagnostics {
	ch := c.Chain
	if truth == nil || ch.Dim < 2 || c.SumDiag || truth.Dim() != ch.Dim || ch.Transition == nil || len(ch.Matched) != ch.States() {
		return nil
	}
	out := make([]*solver.Diagnostics, ch.Dim)
	for k := 1; k < ch.Dim; k++ {
		d := solver.ComponentChecks(ch, truth, k)
		out[k] = &d
	}
	return out
}

// Points counts the sweep points of every job: the jobs of `gridstage
// run`, one per point.
func (r Run) Points() int {
	var n int
	for _, j := range r.Jobs {
		n += len(j.Points)
	}
	return n
}
