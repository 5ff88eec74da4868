package main

import (
	"fmt"
	"io"
	"strconv"
	"strings"
	"text/tabwriter"

	"gridstage/internal/finitejson"
	"gridstage/internal/plural"
	"gridstage/solver"
)

// chainReport is what `discretize` prints for a Markov chain.
type chainReport struct {
	Kind         string
	Process      map[string]any
	Chain        *solver.Chain
	Diag         solver.Diagnostics
	Baseline     *solver.Chain
	BaselineDiag *solver.Diagnostics
	// MomentsHeading replaces "unconditional moments" above the table of
	// the chain's moments (for a life-cycle age, the next age's marginal).
	MomentsHeading string
	// Advice says what grid would carry the requested moments (computed,
	// solver.Advise); empty when none was computed.
	Advice string
	// Provenance identifies a chain made by `discretize`; nil elsewhere.
	Provenance *provenance
	// Sensitivities are the chain's parameter derivatives, when asked for.
	Sensitivities *solver.Sensitivity
}

// sensitivityJSON is the JSON shape of a chain's parameter derivatives:
// for each parameter, the derivative of the grid (one array per state),
// of the transition matrix (rows) and of the stationary distribution.
type sensitivityJSON struct {
	Params     []string               `json:"params"`
	Grid       map[string][][]float64 `json:"grid"`
	Transition map[string][][]float64 `json:"transition"`
	Stationary map[string][]float64   `json:"stationary"`
}

func sensitivityRows(s *solver.Sensitivity, c *solver.Chain) *sensitivityJSON {
	if s == nil {
		return nil
	}
	n, d := c.States(), c.Dim
	out := &sensitivityJSON{Params: s.Params, Grid: map[string][][]float64{}, Transition: map[string][][]float64{}, Stationary: map[string][]float64{}}
	for k, name := range s.Params {
		g, t := make([][]float64, n), make([][]float64, n)
		for i := 0; i < n; i++ {
			g[i] = s.Grid[k][i*d : (i+1)*d]
			t[i] = s.Transition[k][i*n : (i+1)*n]
		}
		out.Grid[name], out.Transition[name], out.Stationary[name] = g, t, s.Stationary[k]
	}
	return out
}

// chainJSON is the JSON shape (contract: grid is an array of state vectors,
// transition an array of rows).
type chainJSON struct {
	Kind       string         `json:"kind"`
	Process    map[string]any `json:"process"`
	Method     string         `json:"method"`
	Moments    int            `json:"moments"`
	Grid       [][]float64    `json:"grid"`
	Transition [][]float64    `json:"transition"`
	Stationary []float64      `json:"stationary"`
	// StationaryReason says why stationary is null.
	StationaryReason string `json:"stationary_reason,omitempty"`
	// Degenerate says why the chain is degenerate (identity, reducible).
	Degenerate string `json:"degenerate,omitempty"`
	// Advice says what grid would carry the requested moments.
	Advice      string             `json:"advice,omitempty"`
	Matched     []int              `json:"matched"`
	Diagnostics solver.Diagnostics `json:"diagnostics"`
	Baseline    *baselineJSON      `json:"baseline,omitempty"`
	// Sensitivities holds the parameter derivatives (--sensitivities).
	Sensitivities *sensitivityJSON `json:"sensitivities,omitempty"`
	*provenance
}

type baselineJSON struct {
	Method      string             `json:"method"`
	Grid        [][]float64        `json:"grid"`
	Transition  [][]float64        `json:"transition"`
	Diagnostics solver.Diagnostics `json:"diagnostics"`
}

func gridRows(c *solver.Chain) [][]float64 {
	out := make([][]float64, c.States())
	for i := range out {
		out[i] = c.State(i)
	}
	return out
}

func transitionRows(c *solver.Chain) [][]float64 {
	out := make([][]float64, c.States())
	for i := range out {
		out[i] = c.Row(i)
	}
	return out
}

func (r chainReport) print(w io.Writer, asJSON bool) error {
	if asJSON {
		j := chainJSON{
			Kind: r.Kind, Process: r.Process, Method: r.Chain.Method.String(), Moments: r.Chain.Moments,
			Grid: gridRows(r.Chain), Transition: transitionRows(r.Chain), Stationary: r.Diag.Stationary,
			Matched: r.Chain.Matched, Diagnostics: r.Diag, provenance: r.Provenance, Degenerate: r.Diag.Degenerate,
			Advice: r.Advice, Sensitivities: sensitivityRows(r.Sensitivities, r.Chain),
		}
		if j.Stationary == nil {
			j.StationaryReason = r.Diag.StationaryErr
		}
		if r.Baseline != nil {
			j.Baseline = &baselineJSON{Method: r.Baseline.Method.String(), Grid: gridRows(r.Baseline),
				Transition: transitionRows(r.Baseline), Diagnostics: *r.BaselineDiag}
		}
		return finitejson.Encode(w, j)
	}
	return r.printText(w)
}

func (r chainReport) printText(w io.Writer) error {
	c, d := r.Chain, r.Diag
	n := c.States()
	if c.Moments == 0 {
		fmt.Fprintf(w, "%s chain, method %s, %d states, no moment matched: each row is the node rule's own weights times the conditional density, normalised (the prior maximum entropy starts from)\n\n",
			r.Kind, c.Method, n)
	} else {
		fmt.Fprintf(w, "%s chain, method %s, %d states, %s requested, %d of %d states matched %s\n\n",
			r.Kind, c.Method, n, plural.Count(c.Moments, "moment", "moments"), n-c.Fallbacks(), n, plural.Noun(c.Moments, "it", "them all"))
	}
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, "state\tlevel\tstationary\tmatched\tmean err\tvar err\tskew err\tkurt err\tprior KL\tstranded\t")
	for i, s := range d.States {
		pi := "-"
		if d.Stationary != nil {
			pi = fmt.Sprintf("%.4g", d.Stationary[i])
		}
		fmt.Fprintf(tw, "%d\t%.6g\t%s\t%d\t%s\t%s\t%s\t%s\t%s\t%s\t\n", i, s.Level[0], pi, s.Matched,
			sci(s.RelErr.Mean), sci(s.RelErr.Var), sci(s.RelErr.Skew), sci(s.RelErr.Kurt), optionalSci(s.PriorKL), strandedText(s.Shape))
	}
	tw.Flush()
	fmt.Fprintln(w, "(errors in standardized units: mean/sd, var/var, skewness, kurtosis/kurtosis; prior KL: the row's\n"+
		" Kullback-Leibler divergence from its prior weights; stranded: probability beyond a valley of the row)")

	fmt.Fprintf(w, "\ntransition matrix (row = from, column = to)\n")
	for i := 0; i < n; i++ {
		cells := make([]string, n)
		for j, p := range c.Row(i) {
			cells[j] = fmt.Sprintf("%.4f", p)
		}
		fmt.Fprintln(w, strings.Join(cells, " "))
	}

	heading := "unconditional moments"
	if r.MomentsHeading != "" {
		heading = r.MomentsHeading
	}
	fmt.Fprintln(w, "\n"+heading)
	tw = tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	header := "\ttrue\t" + c.Method.String() + "\t"
	if r.BaselineDiag != nil {
		header += r.Baseline.Method.String() + "\t"
	}
	fmt.Fprintln(tw, header)
	row := func(name string, f func(solver.Summary) float64) {
		line := fmt.Sprintf("%s\t%.6g\t%.6g\t", name, f(d.True), f(d.Chain))
		if r.BaselineDiag != nil {
			line += fmt.Sprintf("%.6g\t", f(r.BaselineDiag.Chain))
		}
		fmt.Fprintln(tw, line)
	}
	row("mean", func(s solver.Summary) float64 { return s.Mean })
	row("sd", func(s solver.Summary) float64 { return s.SD })
	row("skewness", func(s solver.Summary) float64 { return s.Skew })
	row("kurtosis", func(s solver.Summary) float64 { return s.Kurt })
	row("autocorrelation", func(s solver.Summary) float64 { return s.Autocorr })
	tw.Flush()

	fmt.Fprintln(w, "\nworst conditional-moment error over states (standardized units)")
	tw = tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, "\t"+strings.TrimPrefix(header, "\ttrue\t"))
	worst := func(name string, f func(solver.Moments) float64) {
		line := fmt.Sprintf("%s\t%s\t", name, sci(f(d.WorstRelErr)))
		if r.BaselineDiag != nil {
			line += sci(f(r.BaselineDiag.WorstRelErr)) + "\t"
		}
		fmt.Fprintln(tw, line)
	}
	worst("mean", func(m solver.Moments) float64 { return m.Mean })
	worst("variance", func(m solver.Moments) float64 { return m.Var })
	worst("skewness", func(m solver.Moments) float64 { return m.Skew })
	worst("kurtosis", func(m solver.Moments) float64 { return m.Kurt })
	tw.Flush()
	if d.Degenerate != "" {
		fmt.Fprintln(w, "\nwarning: degenerate chain: "+d.Degenerate)
	}
	if msg := shapeWarning(d); msg != "" {
		fmt.Fprintln(w, "\nwarning: "+msg)
	}
	if k := c.Fallbacks(); k > 0 {
		fmt.Fprintf(w, "\nwarning: %s could not match all %d moments (proven infeasible on this grid there); see the matched column\n", plural.Count(k, "state", "states"), c.Moments)
		if r.Advice != "" {
			fmt.Fprintln(w, "advice: "+r.Advice)
		}
	}
	if r.Provenance != nil {
		r.Provenance.printText(w)
	}
	return nil
}

// optionalSci formats an optional number, "-" when absent.
func optionalSci(v *float64) string {
	if v == nil {
		return "-"
	}
	return sci(*v)
}

// strandedText formats a row's stranded mass, with a '!' when the row is
// far from unimodal.
func strandedText(s *solver.RowShape) string {
	switch {
	case s == nil:
		return "-"
	case s.FarFromUnimodal:
		return sci(s.StrandedMass) + "!"
	}
	return sci(s.StrandedMass)
}

// shapeWarning names the states whose rows are far from unimodal, or
// returns "".
func shapeWarning(d solver.Diagnostics) string {
	var states []string
	worst := 0.0
	for i, s := range d.States {
		if s.Shape != nil && s.Shape.FarFromUnimodal {
			states = append(states, strconv.Itoa(i))
			worst = max(worst, s.Shape.StrandedMass)
		}
	}
	if len(states) == 0 {
		return ""
	}
	return fmt.Sprintf("%d row(s) far from unimodal (states %s): up to %.3g of the probability lies beyond a valley, a point "+
		"below %g times a probability farther out; marked ! in the stranded column", len(states), strings.Join(states, ", "), worst, solver.ValleyRatio)
}

// sci formats an error compactly.
func sci(v float64) string {
	if v == 0 {
		return "0"
	}
	return fmt.Sprintf("%.1e", v)
}
