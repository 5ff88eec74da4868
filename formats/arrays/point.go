package arrays

import (
	"fmt"

	"gridstage/formats"
	"gridstage/solver"
)

// Point is one sweep point of a set with every age of its chain, as read
// from the set's files.
type Point struct {
	Header formats.Header
	// Records hold the point's ages in order (one for a time-invariant
	// chain; for a life cycle the transition ages, then the terminal age).
	Records []formats.Record
	// ChainHash is the point's chain hash (docs/HASHES.md).
	ChainHash string
}

// Index returns the sweep point index.
func (p *Point) Index() int { return p.Records[0].Point }

// lifeCycle reports whether the point has more than one age.
func (p *Point) lifeCycle() bool { return len(p.Records) > 1 }

// transitionAges returns the records that carry a transition matrix.
func (p *Point) transitionAges() []formats.Record {
	var out []formats.Record
	for _, r := range p.Records {
		if r.Chain.Transition != nil {
			out = append(out, r)
		}
	}
	return out
}

// ParamValues returns the swept values in Header.Params order.
func (p *Point) ParamValues() []float64 {
	v := make([]float64, len(p.Header.Params))
	for k, name := range p.Header.Params {
		v[k] = p.Records[0].Params[name]
	}
	return v
}

// momentColumns orders the conditional moments of the moments arrays.
var momentColumns = []string{"mean", "variance", "skewness", "kurtosis"}

// Arrays returns the point as named arrays (docs/FORMATS.md, "Arrays for
// other languages"). A time-invariant chain of N states in d dimensions
// gives grid N×d, transition N×N, stationary N (when computed), matched N
// and the conditional moments N×4; a life cycle with T transitions gives
// grid (T+1)×N×d, transition T×N×N, initial N, matched (T+1)×N and moments
// T×N×4. contentHashes is the JSON object of the source files' content
// hashes by table, stored as the string content_hashes. It fails when the
// ages of a life cycle differ in their number of states, which no kind
// gridstage builds does.
func (p *Point) Arrays(contentHashes string) ([]Array, error) {
	h := p.Header
	d := h.Dim
	first := p.Records[0]
	n := first.Chain.States()
	for _, r := range p.Records {
		if r.Chain.States() != n {
			return nil, fmt.Errorf("arrays: point %d: age %d has %d states, age 0 has %d: the ages cannot be stacked", first.Point, r.Age, r.Chain.States(), n)
		}
	}
	trans := p.transitionAges()
	life := p.lifeCycle()
	stack := func(inner ...int) []int {
		if life {
			return append([]int{len(trans)}, inner...)
		}
		return inner
	}

	var grid []float64
	var matched []int32
	for _, r := range p.Records {
		grid = append(grid, r.Chain.Grid...)
		for _, m := range r.Chain.Matched {
			matched = append(matched, int32(m))
		}
	}
	gridShape, matchedShape := []int{n, d}, []int{n}
	if life {
		gridShape, matchedShape = []int{len(p.Records), n, d}, []int{len(p.Records), n}
	}
	var tr, mc, mt []float64
	for _, r := range trans {
		tr = append(tr, r.Chain.Transition...)
		mc, mt = appendMoments(mc, mt, r.Diag.States)
	}
	out := []Array{
		Floats("grid", grid, gridShape...),
		Floats("transition", tr, stack(n, n)...),
	}
	if !life && first.Diag.Stationary != nil {
		out = append(out, Floats("stationary", first.Diag.Stationary, n))
	}
	if first.Initial != nil {
		out = append(out, Floats("initial", first.Initial, n))
	}
	out = append(out,
		Ints("matched", matched, matchedShape...),
		Floats("moments_chain", mc, stack(n, 4)...),
		Floats("moments_true", mt, stack(n, 4)...),
		Texts("moment_names", momentColumns),
	)

	if first.Baseline != nil {
		nb := len(first.Baseline.States)
		var bg, bt, bmc, bmt []float64
		for _, r := range trans {
			if r.Baseline == nil || len(r.Baseline.States) != nb {
				return nil, fmt.Errorf("arrays: point %d: the baseline is missing or changes size at age %d", first.Point, r.Age)
			}
			for _, s := range r.Baseline.States {
				bg = append(bg, s.Level...)
			}
			bt = append(bt, r.BaselineTransition...)
			bmc, bmt = appendMoments(bmc, bmt, r.Baseline.States)
		}
		out = append(out,
			Scalar("baseline_method", first.Baseline.Method),
			Floats("baseline_grid", bg, stack(nb, d)...),
			Floats("baseline_transition", bt, stack(nb, nb)...))
		if !life && first.Baseline.Stationary != nil {
			out = append(out, Floats("baseline_stationary", first.Baseline.Stationary, nb))
		}
		out = append(out,
			Floats("baseline_moments_chain", bmc, stack(nb, 4)...),
			Floats("baseline_moments_true", bmt, stack(nb, 4)...))
	}

	out = append(out,
		Texts("param_names", h.Params),
		Floats("param_values", p.ParamValues(), len(h.Params)),
		Ints("point", []int32{int32(first.Point)}),
		Scalar("process", h.Process),
		Scalar("kind", h.Kind),
		Scalar("method", h.Method),
		Scalar("spec", string(first.Spec)),
		Scalar("spec_hash", first.SpecHash),
		Scalar("chain_hash", p.ChainHash),
		Scalar("numeric_version", h.Numeric),
		Scalar("tool_version", h.Tool),
		Scalar("content_hashes", contentHashes),
	)
	return out, nil
}

// appendMoments appends each state's conditional moments under the chain
// and the truth, in momentColumns order.
func appendMoments(mc, mt []float64, states []solver.StateCheck) ([]float64, []float64) {
	for _, s := range states {
		mc = append(mc, s.Chain.Mean, s.Chain.Var, s.Chain.Skew, s.Chain.Kurt)
		mt = append(mt, s.True.Mean, s.True.Var, s.True.Skew, s.True.Kurt)
	}
	return mc, mt
}
