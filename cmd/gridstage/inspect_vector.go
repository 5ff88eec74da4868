package main

import (
	"fmt"
	"io"
	"math"
	"strings"
	"text/tabwriter"

	"gridstage/formats"
	"gridstage/internal/plural"
	"gridstage/solver"
)

// maxShownStates is the largest chain whose transition matrix inspect
// prints as text; larger ones are left to --json.
const maxShownStates = 12

// levelList writes grid levels compactly.
func levelList(levels []float64) string {
	parts := make([]string, len(levels))
	for i, x := range levels {
		parts[i] = fmt.Sprintf("%.6g", x)
	}
	return strings.Join(parts, " ")
}

// stateList writes a chain's states compactly: levels for a univariate
// chain, one parenthesized vector per state otherwise.
func stateList(c *solver.Chain) string {
	if c.Dim == 1 {
		return levelList(c.Grid)
	}
	parts := make([]string, c.States())
	for i := range parts {
		parts[i] = "(" + levelList(c.State(i)) + ")"
	}
	return strings.Join(parts, " ")
}

// printVectorRecord shows a chain whose state is a vector (kinds var,
// ar1-volatility, product): each state's vector with the largest standardized errors of
// its conditional mean vector and covariance matrix, the transition matrix
// when it is small, and the stationary moments of chain and process. An
// age of a life-cycle product is diagnosed for the sum of its coordinates.
func printVectorRecord(w io.Writer, kind string, rec *formats.Record, lifeCycle bool) error {
	c, v, bv := rec.Chain, rec.Vector, rec.BaselineVector
	d, n := c.Dim, c.States()
	fmt.Fprintf(w, "%s chain (d = %d), method %s, %d states, %d moments requested, %d of %d states matched them all\n",
		kind, d, c.Method, n, c.Moments, n-c.Fallbacks(), n)
	if kind == "ar1-volatility" {
		fmt.Fprintln(w, "(x0 is the level, x1 the log-variance)")
	}
	fmt.Fprintln(w)

	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	head := "state\t"
	for k := 0; k < d; k++ {
		head += fmt.Sprintf("x%d\t", k)
	}
	head += "stationary\tmatched\t"
	switch {
	case v != nil:
		head += "mean err\tcov err\t"
	case lifeCycle:
		head += "sum mean err\tsum var err\t"
	default:
		head += "x0 mean err\tx0 var err\t"
	}
	fmt.Fprintln(tw, head)
	for i := 0; i < n; i++ {
		line := fmt.Sprintf("%d\t", i)
		for _, x := range c.State(i) {
			line += fmt.Sprintf("%.5g\t", x)
		}
		pi := "-"
		if rec.Diag.Stationary != nil {
			pi = fmt.Sprintf("%.4g", rec.Diag.Stationary[i])
		}
		line += fmt.Sprintf("%s\t%d\t", pi, c.Matched[i])
		if v != nil {
			line += sci(v.MeanErr[i]) + "\t" + sci(v.CovErr[i]) + "\t"
		} else {
			s := rec.Diag.States[i]
			line += sci(s.RelErr.Mean) + "\t" + sci(s.RelErr.Var) + "\t"
		}
		fmt.Fprintln(tw, line)
	}
	tw.Flush()
	switch {
	case v != nil:
		fmt.Fprintln(w, "(largest error over components, in standardized units: L^-1 (mean error) and L^-1 (cov error) L^-T, with L L^T the true conditional covariance)")
	case lifeCycle:
		fmt.Fprintln(w, "(errors of the sum of the coordinates next period against the sum of the components' conditional moments, in standardized units)")
	}

	if n <= maxShownStates {
		fmt.Fprintf(w, "\ntransition matrix (row = from, column = to)\n")
		for i := 0; i < n; i++ {
			cells := make([]string, n)
			for j, p := range c.Row(i) {
				cells[j] = fmt.Sprintf("%.4f", p)
			}
			fmt.Fprintln(w, strings.Join(cells, " "))
		}
	} else {
		fmt.Fprintf(w, "\ntransition matrix: %d × %d, shown with --json\n", n, n)
	}
	if v == nil {
		return nil
	}

	fmt.Fprintln(w, "\nstationary moments")
	tw = tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	header := "\ttrue\t" + c.Method.String() + "\t"
	if bv != nil {
		header += rec.Baseline.Method + "\t"
	}
	fmt.Fprintln(tw, header)
	value := func(vals []float64, i int) string {
		if vals == nil {
			return "-"
		}
		return fmt.Sprintf("%.6g", vals[i])
	}
	row := func(name string, pick func(*formats.VectorDiag) []float64, truth []float64, i int) {
		line := fmt.Sprintf("%s\t%s\t%s\t", name, value(truth, i), value(pick(v), i))
		if bv != nil {
			line += value(pick(bv), i) + "\t"
		}
		fmt.Fprintln(tw, line)
	}
	for k := 0; k < d; k++ {
		row(fmt.Sprintf("mean x%d", k), func(x *formats.VectorDiag) []float64 { return x.ChainMean }, v.TrueMean, k)
	}
	for k := 0; k < d; k++ {
		for l := k; l < d; l++ {
			row(fmt.Sprintf("cov x%d x%d", k, l), func(x *formats.VectorDiag) []float64 { return x.ChainCov }, v.TrueCov, k*d+l)
		}
	}
	tw.Flush()

	fmt.Fprintln(w, "\nworst errors (standardized units)")
	tw = tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, "\t"+strings.TrimPrefix(header, "\ttrue\t"))
	worst := func(name string, f func(*formats.VectorDiag) float64) {
		line := fmt.Sprintf("%s\t%s\t", name, sci(f(v)))
		if bv != nil {
			line += sci(f(bv)) + "\t"
		}
		fmt.Fprintln(tw, line)
	}
	stationary := func(x *formats.VectorDiag) float64 {
		if x.ChainCov == nil {
			return math.NaN()
		}
		return x.StationaryCovErr
	}
	worst("conditional mean", func(x *formats.VectorDiag) float64 { return x.WorstMeanErr })
	worst("conditional covariance", func(x *formats.VectorDiag) float64 { return x.WorstCovErr })
	worst("stationary covariance", stationary)
	tw.Flush()
	if rec.Diag.StationaryErr != "" {
		fmt.Fprintln(w, "\nwarning: "+rec.Diag.StationaryErr)
	}
	if k := c.Fallbacks(); k > 0 {
		fmt.Fprintf(w, "\nwarning: %s could not match the full moment set (the grid cannot carry it there); see the matched column\n", plural.Count(k, "state", "states"))
	}
	return nil
}
