package main

import (
	"fmt"
	"io"
	"math"
	"strings"
	"text/tabwriter"

	"github.com/spf13/cobra"

	"gridstage/internal/finitejson"
	"gridstage/internal/plural"
	"gridstage/solver"
)

func init() { extraKinds = append(extraKinds, newVARCmd) }

// varSettings are the discretization flags of `discretize var`.
type varSettings struct {
	states         statesFlag
	moments        int
	method, axes   string
	nodes, compare string
	matching       string
	width          float64
	json           bool
}

func newVARCmd() *cobra.Command {
	var (
		vf       varFlags
		vs       varSettings
		withSens bool
	)
	cmd := &cobra.Command{
		Use:   "var --coef LIST --cov LIST [--intercept LIST] --states N [flags]",
		Short: "VAR(1): x' = intercept + coef x + e, e ~ N(0, cov), matrices as row-major lists",
		Long: `VAR(1): x' = intercept + coef x + e, e ~ N(0, cov), of dimension d from 1 to 4.

Matrices are row-major comma-separated lists: --coef 0.9,0.1,0,0.8 is the
coefficient matrix [[0.9, 0.1], [0, 0.8]], so coef[1,2] = 0.1 (rows and
columns counted from 1). --states is the number of points per axis, so
the chain has states^d states, numbered row-major over the axes (the first
axis varies slowest).

maxent matches the exact conditional means and covariances in every state
where the grid can carry them (--moments 4 adds the marginal third and
fourth moments), on a tensor grid along the principal axes of the
stationary covariance (or the coordinate axes); tauchen is Tauchen's (1986)
VAR construction.`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			p, err := vf.process(cmd)
			if err != nil {
				return err
			}
			s, err := vs.settings(cmd, p.Dim())
			if err != nil {
				return err
			}
			if _, _, err := vs.baseline(s.Method); err != nil {
				return err
			}
			sol, prov, advice, err := solveEntry(vs.entry(cmd, p))
			if err != nil {
				return err
			}
			out := varReport{Process: p, Settings: s, Chain: sol.Chain, Diag: *sol.Vector,
				Baseline: sol.Baseline, BaselineDiag: sol.BaselineVector, Provenance: prov, Advice: advice}
			if withSens {
				if out.Sensitivities, err = specSensitivities(prov.Spec, sol.Chain); err != nil {
					return err
				}
			}
			return out.print(cmd.OutOrStdout(), vs.json)
		},
	}
	fs := cmd.Flags()
	vf.register(fs)
	vs.states.register(fs, 9, "grid points per axis (the chain has states^d states)")
	fs.StringVar(&vs.method, "method", "maxent", "maxent or tauchen")
	fs.StringVar(&vs.axes, "axes", "principal", "maxent grid orientation: principal (axes of the stationary covariance) or coordinate")
	fs.IntVar(&vs.moments, "moments", 0, "maxent moment level: 1 means, 2 also covariances (default), 3 or 4 also marginal third and fourth moments")
	fs.StringVar(&vs.nodes, "nodes", "", "placement of the grid points along each axis (maxent only): lattice (the default; equally spaced over ± width), gauss-hermite, gauss-legendre, or equal-mass (at quantiles)")
	fs.StringVar(&vs.matching, "matching", "", matchingHelp)
	fs.Float64Var(&vs.width, "width", 0, "half-width of each axis in stationary s.d. (default sqrt(states-1) for maxent, 3 for tauchen)")
	fs.StringVar(&vs.compare, "compare", "", "baseline shown beside the chain: maxent, tauchen or none (default tauchen; maxent when --method is tauchen)")
	fs.BoolVar(&vs.json, "json", false, "print one JSON object instead of tables")
	fs.BoolVar(&withSens, "sensitivities", false, "add the derivatives of the grid, the transition matrix and the stationary distribution with respect to every intercept, coef and cov entry to the JSON (maxent)")
	return cmd
}

// settings validates the discretization flags for dimension d.
func (v *varSettings) settings(cmd *cobra.Command, d int) (solver.Settings, error) {
	var s solver.Settings
	if !v.states.auto {
		if err := axisStates(v.states.n, d); err != nil {
			return s, err
		}
	}
	if err := univariateOnly("method", v.method); err != nil {
		return s, err
	}
	if err := choice("method", v.method, []string{"maxent", "tauchen"}); err != nil {
		return s, err
	}
	if err := choice("axes", v.axes, solver.AxesNames()); err != nil {
		return s, err
	}
	nodes, err := nodeRule(v.nodes)
	if err != nil {
		return s, err
	}
	method, _ := solver.ParseMethod(v.method)
	if method != solver.MaxEnt {
		for _, f := range []string{"moments", "nodes", "axes"} {
			if cmd.Flags().Changed(f) {
				return s, badInput("--%s applies to --method maxent only: tauchen places its own grid and matches no moments exactly", f)
			}
		}
	}
	if cmd.Flags().Changed("moments") {
		if err := intRange("moments", v.moments, 1, 4); err != nil {
			return s, err
		}
	}
	if cmd.Flags().Changed("width") {
		if err := positive("width", v.width); err != nil {
			return s, err
		}
	}
	matching, err := matchingPolicy(v.matching, method)
	if err != nil {
		return s, err
	}
	if err := v.states.check(cmd.Flags(), method); err != nil {
		return s, err
	}
	axes, _ := solver.ParseAxes(v.axes)
	return solver.Settings{States: v.states.n, Method: method, Moments: v.moments, Nodes: nodes, Width: v.width, Axes: axes, Matching: matching}, nil
}

// entry returns the process as a manifest entry: matrices as lists of
// rows, the flags given (the manifest fills in the same defaults).
func (v *varSettings) entry(cmd *cobra.Command, p solver.VAR) map[string]any {
	d := p.Dim()
	rows := func(m []float64) [][]float64 {
		out := make([][]float64, d)
		for i := range out {
			out[i] = m[i*d : (i+1)*d]
		}
		return out
	}
	e := map[string]any{"kind": "var", "coef": rows(p.Coef), "cov": rows(p.Cov), "method": v.method}
	v.states.entry(cmd.Flags(), e)
	if p.Intercept != nil {
		e["intercept"] = p.Intercept
	}
	fs := cmd.Flags()
	if v.method == "maxent" {
		e["axes"] = v.axes
		if v.nodes != "" {
			e["nodes"] = v.nodes
		}
		if v.matching != "" {
			e["matching"] = v.matching
		}
	}
	if fs.Changed("moments") {
		e["moments"] = v.moments
	}
	if fs.Changed("width") {
		e["width"] = v.width
	}
	if v.compare != "" {
		e["compare"] = v.compare
	}
	return e
}

// baseline returns the comparison method, or false for none.
func (v *varSettings) baseline(main solver.Method) (solver.Method, bool, error) {
	switch v.compare {
	case "none":
		return 0, false, nil
	case "":
		if main == solver.Tauchen {
			return solver.MaxEnt, true, nil
		}
		return solver.Tauchen, true, nil
	}
	if err := univariateOnly("compare", v.compare); err != nil {
		return 0, false, err
	}
	if err := choice("compare", v.compare, []string{"maxent", "tauchen", "none"}); err != nil {
		return 0, false, err
	}
	b, _ := solver.ParseMethod(v.compare)
	return b, true, nil
}

// varReport is what `discretize var` prints.
type varReport struct {
	Process      solver.VAR
	Settings     solver.Settings
	Chain        *solver.Chain
	Diag         solver.VectorDiagnostics
	Baseline     *solver.Chain
	BaselineDiag *solver.VectorDiagnostics
	Provenance   provenance
	// Advice says what grid would carry the requested moments; empty when
	// nothing fell back.
	Advice string
	// Sensitivities are the chain's parameter derivatives, when asked for.
	Sensitivities *solver.Sensitivity
}

// varJSON has the shape of the ar1 output (contract: grid is an array of
// state vectors, transition an array of rows), with vector diagnostics.
type varJSON struct {
	Kind        string                   `json:"kind"`
	Process     map[string]any           `json:"process"`
	Method      string                   `json:"method"`
	Moments     int                      `json:"moments"`
	Axes        string                   `json:"axes,omitempty"`
	Grid        [][]float64              `json:"grid"`
	Transition  [][]float64              `json:"transition"`
	Stationary  []float64                `json:"stationary"`
	Matched     []int                    `json:"matched"`
	Diagnostics solver.VectorDiagnostics `json:"diagnostics"`
	Baseline    *varBaselineJSON         `json:"baseline,omitempty"`
	// Advice says what grid would carry the requested moments.
	Advice string `json:"advice,omitempty"`
	// Sensitivities holds the parameter derivatives (--sensitivities).
	Sensitivities *sensitivityJSON `json:"sensitivities,omitempty"`
	provenance
}

type varBaselineJSON struct {
	Method      string                   `json:"method"`
	Grid        [][]float64              `json:"grid"`
	Transition  [][]float64              `json:"transition"`
	Diagnostics solver.VectorDiagnostics `json:"diagnostics"`
}

func (r varReport) print(w io.Writer, asJSON bool) error {
	if asJSON {
		j := varJSON{Kind: "var", Process: varParams(r.Process), Method: r.Chain.Method.String(), Moments: r.Chain.Moments,
			Grid: gridRows(r.Chain), Transition: transitionRows(r.Chain), Stationary: r.Diag.Stationary,
			Matched: r.Chain.Matched, Diagnostics: r.Diag, Advice: r.Advice, provenance: r.Provenance,
			Sensitivities: sensitivityRows(r.Sensitivities, r.Chain)}
		if r.Chain.Method == solver.MaxEnt {
			j.Axes = r.Settings.Axes.String()
		}
		if r.Baseline != nil {
			j.Baseline = &varBaselineJSON{Method: r.Baseline.Method.String(), Grid: gridRows(r.Baseline),
				Transition: transitionRows(r.Baseline), Diagnostics: *r.BaselineDiag}
		}
		return finitejson.Encode(w, j)
	}
	return r.printText(w)
}

func (r varReport) printText(w io.Writer) error {
	c, dg := r.Chain, r.Diag
	d, n := c.Dim, c.States()
	what := map[int]string{0: "none exactly", 1: "conditional means", 2: "conditional means and covariances",
		3: "means, covariances and marginal skewness", 4: "means, covariances, marginal skewness and kurtosis"}[c.Moments]
	fmt.Fprintf(w, "var chain (d = %d), method %s, %d states (%d per axis", d, c.Method, n, perAxis(n, d))
	if c.Method == solver.MaxEnt {
		fmt.Fprintf(w, ", %s axes", r.Settings.Axes)
	}
	fmt.Fprintf(w, "), matching %s; %d of %d states matched the full set\n\n", what, n-c.Fallbacks(), n)

	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	head := "state\t"
	for k := 0; k < d; k++ {
		head += fmt.Sprintf("x%d\t", k)
	}
	fmt.Fprintln(tw, head+"stationary\tmatched\tmean err\tcov err\t")
	for i, st := range dg.States {
		line := fmt.Sprintf("%d\t", i)
		for _, v := range st.Level {
			line += fmt.Sprintf("%.5g\t", v)
		}
		pi := math.NaN()
		if dg.Stationary != nil {
			pi = dg.Stationary[i]
		}
		fmt.Fprintf(tw, "%s%.4g\t%d\t%s\t%s\t\n", line, pi, st.Matched, sci(maxAbsOf(st.MeanErr)), sci(maxAbsOf(st.CovErr)))
	}
	tw.Flush()
	fmt.Fprintln(w, "(largest error over components, in standardized units: L^-1 (mean error), L^-1 (cov error) L^-T with L L^T = cov)")
	fmt.Fprintln(w, "transition matrix: use --json")

	fmt.Fprintln(w, "\nstationary moments")
	tw = tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	header := "\ttrue\t" + c.Method.String() + "\t"
	if r.BaselineDiag != nil {
		header += r.Baseline.Method.String() + "\t"
	}
	fmt.Fprintln(tw, header)
	row := func(name string, f func(solver.VectorDiagnostics, bool) float64) {
		line := fmt.Sprintf("%s\t%.6g\t%.6g\t", name, f(dg, true), f(dg, false))
		if r.BaselineDiag != nil {
			line += fmt.Sprintf("%.6g\t", f(*r.BaselineDiag, false))
		}
		fmt.Fprintln(tw, line)
	}
	pick := func(v solver.VectorDiagnostics, truth bool) (solver.VectorSummary, []float64) {
		if truth {
			return v.True, v.TrueAutocorr
		}
		return v.Chain, v.ChainAutocorr
	}
	stationary := func(get func(solver.VectorSummary, []float64) float64) func(solver.VectorDiagnostics, bool) float64 {
		return func(v solver.VectorDiagnostics, truth bool) float64 {
			if !truth && v.StationaryErr != "" {
				return math.NaN()
			}
			s, a := pick(v, truth)
			return get(s, a)
		}
	}
	for k := 0; k < d; k++ {
		row(fmt.Sprintf("mean x%d", k), stationary(func(s solver.VectorSummary, _ []float64) float64 { return s.Mean[k] }))
	}
	for k := 0; k < d; k++ {
		for l := k; l < d; l++ {
			row(fmt.Sprintf("cov x%d x%d", k, l), stationary(func(s solver.VectorSummary, _ []float64) float64 { return s.Cov[k*d+l] }))
		}
	}
	for k := 0; k < d; k++ {
		for l := 0; l < d; l++ {
			row(fmt.Sprintf("corr(x%d', x%d)", k, l), stationary(func(_ solver.VectorSummary, a []float64) float64 { return a[k*d+l] }))
		}
	}
	tw.Flush()
	fmt.Fprintln(w, "(true covariance S: the discrete Lyapunov solution of S = coef S coef' + cov)")

	fmt.Fprintln(w, "\nworst errors (standardized units)")
	tw = tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, "\t"+strings.TrimPrefix(header, "\ttrue\t"))
	worst := func(name string, f func(solver.VectorDiagnostics) float64) {
		line := fmt.Sprintf("%s\t%s\t", name, sci(f(dg)))
		if r.BaselineDiag != nil {
			line += sci(f(*r.BaselineDiag)) + "\t"
		}
		fmt.Fprintln(tw, line)
	}
	worst("conditional mean", func(v solver.VectorDiagnostics) float64 { return v.WorstMeanErr })
	worst("conditional covariance", func(v solver.VectorDiagnostics) float64 { return v.WorstCovErr })
	worst("stationary covariance", func(v solver.VectorDiagnostics) float64 { return v.StationaryCovErr })
	worst("lag-one autocorrelation", func(v solver.VectorDiagnostics) float64 { return v.AutocorrErr })
	tw.Flush()
	if dg.Degenerate != "" {
		fmt.Fprintln(w, "\nwarning: degenerate chain: "+dg.Degenerate)
	} else if dg.StationaryErr != "" {
		fmt.Fprintln(w, "\nwarning: "+dg.StationaryErr)
	}
	if k := c.Fallbacks(); k > 0 {
		fmt.Fprintf(w, "\nwarning: %s could not match the full moment set (proven infeasible on this grid there); see the matched column\n", plural.Count(k, "state", "states"))
		if r.Advice != "" {
			fmt.Fprintln(w, "advice: "+r.Advice)
		}
	}
	r.Provenance.printText(w)
	return nil
}

func maxAbsOf(v []float64) float64 {
	var m float64
	for _, x := range v {
		m = math.Max(m, math.Abs(x))
	}
	return m
}

// perAxis returns the number of points per axis of a tensor grid of n
// states in dimension d.
func perAxis(n, d int) int {
	k := int(math.Round(math.Pow(float64(n), 1/float64(d))))
	for k > 1 && pow(k, d) > n {
		k--
	}
	return k
}

func pow(k, d int) int {
	p := 1
	for i := 0; i < d; i++ {
		p *= k
	}
	return p
}
