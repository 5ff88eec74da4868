package solver

import (
	"math"

	"gridstage/internal/portablemath"
)

// Moments are the first four moments of a conditional distribution.
type Moments struct {
	Mean float64 `json:"mean"`
	Var  float64 `json:"variance"`
	Skew float64 `json:"skewness"`
	Kurt float64 `json:"kurtosis"`
}

// Summary describes a stationary distribution.
type Summary struct {
	Mean     float64 `json:"mean"`
	SD       float64 `json:"sd"`
	Skew     float64 `json:"skewness"`
	Kurt     float64 `json:"kurtosis"`
	Autocorr float64 `json:"autocorrelation"`
}

// Truth gives the exact moments of the process a chain approximates.
type Truth interface {
	// Conditional returns the moments of next period's state given state x
	// (for vector processes, of the first component).
	Conditional(x []float64) Moments
	// Unconditional returns the stationary moments.
	Unconditional() Summary
}

// StateCheck compares a chain's conditional moments in one state with the
// truth.
type StateCheck struct {
	Level   []float64 `json:"level"`
	Chain   Moments   `json:"chain"`
	True    Moments   `json:"true"`
	AbsErr  Moments   `json:"abs_error"`
	RelErr  Moments   `json:"std_error"`
	Matched int       `json:"matched"`
	// Certificate says why Matched moments were matched (see Certificate).
	Certificate Certificate `json:"certificate"`
	// PriorKL is the row's Kullback-Leibler divergence from its prior
	// weights (Chain.PriorKL); nil for methods that start from none.
	PriorKL *float64 `json:"prior_kl,omitempty"`
	// Shape says how far the row is from unimodal (see Shape); nil for
	// vector chains, whose rows have no single order of levels.
	Shape *RowShape `json:"shape,omitempty"`
}

// Diagnostics compares a chain with the process it approximates.
//
// AbsErr is chain minus truth in the process's units. RelErr is the error in
// standardized units: mean error / true conditional s.d., variance error /
// true variance, skewness error, kurtosis error / true kurtosis. These are the
// units in which moment matching is judged.
type Diagnostics struct {
	Method     string       `json:"method"`
	States     []StateCheck `json:"states"`
	Stationary []float64    `json:"stationary"`
	Chain      Summary      `json:"chain_unconditional"`
	True       Summary      `json:"true_unconditional"`
	// WorstRelErr holds the largest |RelErr| of each moment over all states.
	WorstRelErr Moments `json:"worst_std_error"`
	Fallbacks   int     `json:"fallback_states"`
	// StationaryErr is non-empty when the stationary distribution could not
	// be computed (a reducible chain).
	StationaryErr string `json:"stationary_error,omitempty"`
	// Degenerate says why the chain is degenerate (an identity or reducible
	// transition matrix, see Structure.Degenerate); empty when irreducible.
	Degenerate string `json:"degenerate,omitempty"`
	// FarFromUnimodal counts the states whose rows are far from unimodal
	// (RowShape.FarFromUnimodal).
	FarFromUnimodal int `json:"far_from_unimodal_states"`
}

// Diagnose computes the diagnostics of a univariate chain against the truth.
// The chain is not modified.
func Diagnose(c *Chain, truth Truth) Diagnostics {
	n := c.States()
	d := Diagnostics{Method: c.Method.String(), States: make([]StateCheck, n), Fallbacks: c.Fallbacks()}
	x := func(j int) float64 { return c.Grid[j*c.Dim] }
	var rows *shaper
	if c.Dim == 1 {
		rows = newShaper(c.Grid)
	}
	for i := 0; i < n; i++ {
		row := c.Row(i)
		cm := weightedMoments(row, x)
		tm := truth.Conditional(c.State(i))
		sd := math.Sqrt(tm.Var)
		abs := Moments{cm.Mean - tm.Mean, cm.Var - tm.Var, cm.Skew - tm.Skew, cm.Kurt - tm.Kurt}
		rel := Moments{abs.Mean / sd, abs.Var / tm.Var, abs.Skew, abs.Kurt / tm.Kurt}
		d.States[i] = StateCheck{
			Level: append([]float64(nil), c.State(i)...), Chain: cm, True: tm,
			AbsErr: abs, RelErr: rel, Matched: c.Matched[i], Certificate: c.Certificate(i),
		}
		d.States[i].PriorKL, d.States[i].Shape = rowDiagnostics(c, rows, i)
		if sh := d.States[i].Shape; sh != nil && sh.FarFromUnimodal {
			d.FarFromUnimodal++
		}
		d.WorstRelErr.Mean = math.Max(d.WorstRelErr.Mean, math.Abs(rel.Mean))
		d.WorstRelErr.Var = math.Max(d.WorstRelErr.Var, math.Abs(rel.Var))
		d.WorstRelErr.Skew = math.Max(d.WorstRelErr.Skew, math.Abs(rel.Skew))
		d.WorstRelErr.Kurt = math.Max(d.WorstRelErr.Kurt, math.Abs(rel.Kurt))
	}
	d.True = truth.Unconditional()
	d.Degenerate = Classify(c.Transition, n).Degenerate()
	pi, err := Stationary(c.Transition, n)
	if err != nil {
		d.StationaryErr = err.Error()
		if d.Degenerate == "" {
			d.Degenerate = "nearly decomposable: the stationary distribution cannot be computed in floating point"
		}
		return d
	}
	d.Stationary = pi
	um := weightedMoments(pi, x)
	d.Chain = Summary{Mean: um.Mean, SD: math.Sqrt(um.Var), Skew: um.Skew, Kurt: um.Kurt}
	// Autocorrelation: Cov(x_t, x_{t+1}) / Var under π, using E[x'|i].
	var cov float64
	for i := 0; i < n; i++ {
		var next float64
		for j, p := range c.Row(i) {
			next += float64(p * x(j))
		}
		cov += float64(pi[i] * (x(i) - um.Mean) * (next - um.Mean))
	}
	d.Chain.Autocorr = cov / um.Var
	return d
}

// rowDiagnostics returns the prior divergence and the shape of row i
// (each nil where it does not apply: rows nil for vector chains).
func rowDiagnostics(c *Chain, rows *shaper, i int) (*float64, *RowShape) {
	var kl *float64
	if c.PriorKL != nil {
		v := c.PriorKL[i]
		kl = &v
	}
	if rows == nil {
		return kl, nil
	}
	sh := rows.shape(c.Row(i))
	return kl, &sh
}

// weightedMoments returns mean, variance, skewness and kurtosis of the
// discrete distribution with probabilities w on points x(j).
func weightedMoments(w []float64, x func(int) float64) Moments {
	var mean float64
	for j, p := range w {
		mean += float64(p * x(j))
	}
	var m2, m3, m4 float64
	for j, p := range w {
		d := x(j) - mean
		d2 := float64(d * d)
		m2 += float64(p * d2)
		m3 += float64(p * d2 * d)
		m4 += float64(p * d2 * d2)
	}
	return Moments{Mean: mean, Var: m2, Skew: m3 / portablemath.Pow(m2, 1.5), Kurt: m4 / (m2 * m2)}
}

// WeightedMoments returns the mean, variance, skewness and kurtosis of the
// discrete distribution with probabilities w on the points x.
func WeightedMoments(w, x []float64) Moments {
	return weightedMoments(w, func(j int) float64 { return x[j] })
}
