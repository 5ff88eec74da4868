package report

import (
	"gridstage/formats"
	"gridstage/manifests"
	"gridstage/solver"
)

// worstPoint finds a set's sweep point with the most states that fell
// back (summed over ages; the first such in point order).
type worstPoint struct {
	point, fallbacks int
	spec             []byte
	chains           []*solver.Chain
	// the point being read
	cur          int
	curFallbacks int
	curSpec      []byte
	curChains    []*solver.Chain
	started      bool
}

// note adds one record (records come in (point, age) order).
func (w *worstPoint) note(rec formats.Record) {
	if w.started && rec.Point != w.cur {
		w.finish()
	}
	if !w.started || rec.Point != w.cur {
		w.started, w.cur, w.curFallbacks, w.curSpec, w.curChains = true, rec.Point, 0, rec.Spec, nil
	}
	if rec.Chain != nil && rec.Chain.Transition != nil {
		w.curFallbacks += rec.Chain.Fallbacks()
		w.curChains = append(w.curChains, rec.Chain)
	}
}

// finish closes the point being read.
func (w *worstPoint) finish() {
	if w.curFallbacks > w.fallbacks {
		w.point, w.fallbacks, w.spec, w.chains = w.cur, w.curFallbacks, w.curSpec, w.curChains
	}
	w.curFallbacks = 0
}

// adviseSpec rebuilds the job of a canonical spec and returns the advice
// for its fallback warning, given the stored chains of its ages. A spec
// this build cannot parse gets no advice.
func adviseSpec(spec []byte, chains []*solver.Chain) string {
	job, err := manifests.ParseSpec(spec)
	if err != nil {
		return ""
	}
	p, err := job.Build()
	if err != nil {
		return ""
	}
	carries := true
	for _, c := range chains {
		carries = carries && solver.Carries(c)
	}
	if p.AgeModel != nil {
		// A life cycle's ages are judged by their marginal mass, which the
		// stored chains alone do not give without the initial law: ask.
		carries = false
	}
	if carries {
		return "the states that fell back each hold less than 0.1% of the stationary mass; this grid carries the moments wherever the chain spends its time"
	}
	a, err := p.Advise(0)
	if err != nil {
		return ""
	}
	return a
}
