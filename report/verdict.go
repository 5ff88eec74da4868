package report

import (
	"fmt"
	"math"

	"gridstage/internal/plural"
	"gridstage/report/figures"
	"gridstage/solver"
)

// Level grades a chain.
type Level int

const (
	// Sound: every requested moment matched in every state and the
	// long-run behaviour agrees with the process.
	Sound Level = iota
	// Caution: usable, but something a careful user should know (a
	// fallback, a modest long-run discrepancy).
	Caution
	// Unfit: the chain misrepresents the process or failed a check.
	Unfit
)

// Label is the level in words, so the page never relies on colour alone.
func (l Level) Label() string {
	return [...]string{"Sound", "Use with care", "Do not use"}[l]
}

// Mark is a symbol for the level, shown beside its colour and label.
func (l Level) Mark() string { return [...]string{"✓", "!", "✕"}[l] }

// Class is the CSS class of the level.
func (l Level) Class() string { return [...]string{"sound", "caution", "unfit"}[l] }

// Verdict is a chain's grade with the reasons for it.
type Verdict struct {
	Level   Level
	Reasons []string
}

func (v *Verdict) flag(l Level, format string, args ...any) {
	v.Level = max(v.Level, l)
	v.Reasons = append(v.Reasons, fmt.Sprintf(format, args...))
}

// Thresholds for the verdict (common practice; the report prints them).
// Long-run s.d. errors beyond 1% change the variance of simulated
// outcomes visibly; beyond 10% they change a model's answers. A first-order
// autocorrelation off by 0.01 is within sampling error of a long panel;
// off by 0.05 it changes the implied half-life of a shock materially.
const (
	sdCaution       = 0.01
	sdUnfit         = 0.10
	autocorrCaution = 0.01
	autocorrUnfit   = 0.05
	rowSumTol       = 1e-9
)

// Assess grades a time-invariant chain from its structure and diagnostics.
// It reads the chain and never modifies it.
func Assess(c figures.Case) Verdict { return assess(c, false) }

// AssessAge grades one age of a life-cycle chain: as Assess, except that a
// matrix that moves between two ages' grids has no long-run behaviour of
// its own, so the stationary checks are skipped.
func AssessAge(c figures.Case) Verdict { return assess(c, true) }

func assess(c figures.Case, age bool) Verdict {
	var v Verdict
	if err := c.Chain.Check(rowSumTol); err != nil {
		v.flag(Unfit, "The transition matrix is not a valid probability matrix (%v).", err)
	}
	d := c.Diag
	if d == nil {
		v.flag(Caution, "No diagnostics are stored for this chain, so its moments cannot be checked.")
		return v
	}
	if d.StationaryErr != "" && !age {
		v.flag(Unfit, "The chain has no unique stationary distribution (%s).", d.StationaryErr)
	} else if d.Degenerate != "" && !age {
		v.flag(Caution, "The chain is degenerate: %s.", d.Degenerate)
	}
	if k := c.Chain.Fallbacks(); k > 0 {
		least := c.Chain.Moments
		for _, m := range c.Chain.Matched {
			least = min(least, m)
		}
		v.flag(Caution, "%d of %d states could not match all %d requested moments and fell back (to as few as %d); see the error figure.",
			k, c.Chain.States(), c.Chain.Moments, least)
	}
	if k, worst, at, mass := farFromUnimodal(d); k > 0 {
		where := ""
		if mass >= 0 && !age {
			where = fmt.Sprintf(" These states hold %.2g of the stationary mass.", mass)
		}
		v.flag(Caution, "%d state(s) have rows far from unimodal: up to %.2g of the probability (state %d) lies beyond a valley, a point below %g times a probability farther out, so the chain jumps where the process does not.%s",
			k, worst, at, solver.ValleyRatio, where)
	}
	if k, worst, moment := falseMatches(d); k > 0 {
		v.flag(Unfit, "In %s a moment recorded as matched is off by up to %.2g (standardized, %s), above the tolerance %.0e.",
			plural.Count(k, "state", "states"), worst, moment, figures.MatchTolerance)
	}
	if d.StationaryErr == "" && d.True.SD > 0 && !age {
		rel := d.Chain.SD/d.True.SD - 1
		switch {
		case math.Abs(rel) > sdUnfit || math.IsNaN(rel):
			v.flag(Unfit, "The long-run standard deviation is %s by %.1f%% (limit %.0f%%).", overUnder(rel), 100*math.Abs(rel), 100*sdUnfit)
		case math.Abs(rel) > sdCaution:
			v.flag(Caution, "The long-run standard deviation is %s by %.1f%%.", overUnder(rel), 100*math.Abs(rel))
		}
		gap := d.Chain.Autocorr - d.True.Autocorr
		switch {
		case math.Abs(gap) > autocorrUnfit || math.IsNaN(gap):
			v.flag(Unfit, "The first-order autocorrelation is %.3f against %.3f for the process (limit ±%.2f).", d.Chain.Autocorr, d.True.Autocorr, autocorrUnfit)
		case math.Abs(gap) > autocorrCaution:
			v.flag(Caution, "The first-order autocorrelation is %.3f against %.3f for the process.", d.Chain.Autocorr, d.True.Autocorr)
		}
	}
	return v
}

// advise adds the job's grid advice to the verdict of a chain that fell
// back (Job.Advice, computed for the point with most fallback states).
func (v *Verdict) advise(c figures.Case, j Job) {
	if c.Chain.Fallbacks() == 0 || j.Advice == "" {
		return
	}
	v.Reasons = append(v.Reasons, fmt.Sprintf("Grid advice (computed for point %d, the one with the most states that fell back): %s.", j.AdvicePoint, j.Advice))
}

func overUnder(rel float64) string {
	if rel < 0 {
		return "understated"
	}
	return "overstated"
}

// farFromUnimodal counts the states whose rows are far from unimodal
// (solver.RowShape) and returns the largest stranded mass, its state and
// the stationary mass of the flagged states (−1 when the chain has no
// stationary distribution).
func farFromUnimodal(d *solver.Diagnostics) (states int, worst float64, at int, mass float64) {
	if d.Stationary == nil {
		mass = -1
	}
	for i, st := range d.States {
		if st.Shape == nil || !st.Shape.FarFromUnimodal {
			continue
		}
		states++
		if st.Shape.StrandedMass > worst {
			worst, at = st.Shape.StrandedMass, i
		}
		if d.Stationary != nil {
			mass += d.Stationary[i]
		}
	}
	return states, worst, at, mass
}

// falseMatches counts the states where a moment the chain records as
// matched misses the truth by more than figures.MatchTolerance, and
// returns the worst such error and its moment.
func falseMatches(d *solver.Diagnostics) (states int, worst float64, moment string) {
	for _, st := range d.States {
		errs := [4]float64{st.RelErr.Mean, st.RelErr.Var, st.RelErr.Skew, st.RelErr.Kurt}
		bad := false
		for k := 0; k < min(st.Matched, 4); k++ {
			if e := math.Abs(errs[k]); e > figures.MatchTolerance || math.IsNaN(e) {
				bad = true
				if e > worst || math.IsNaN(e) {
					worst, moment = e, figures.MomentNames[k]
				}
			}
		}
		if bad {
			states++
		}
	}
	return states, worst, moment
}
