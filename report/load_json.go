package report

import (
	"bytes"
	"encoding/json"
	"fmt"
	"os"

	"gridstage/figures"
	"gridstage/solver"
)

// discretizeJSON is the part of `gridstage discretize KIND --json` output a
// report needs (grid: one array per state; transition: one array per row).
type discretizeJSON struct {
	Kind        string              `json:"kind"`
	Process     map[string]any      `json:"process"`
	Method      string              `json:"method"`
	Moments     *int                `json:"moments"`
	Grid        [][]float64         `json:"grid"`
	Transition  [][]float64         `json:"transition"`
	Matched     []int               `json:"matched"`
	Diagnostics *solver.Diagnostics `json:"diagnostics"`
	Weights     []float64           `json:"weights"`
	Baseline    *struct {
		Diagnostics *solver.Diagnostics `json:"diagnostics"`
	} `json:"baseline"`
}

// loadJSON reads the output of `gridstage discretize KIND --json` as a run
// with one job and one point.
func loadJSON(path string) (Run, error) {
	raw, err := os.ReadFile(path)
	if err != nil {
		return Run{}, badInput(path, "cannot be read: %v", err)
	}
	var d discretizeJSON
	dec := json.NewDecoder(bytes.NewReader(raw))
	if err := dec.Decode(&d); err != nil {
		return Run{}, badInput(path, "is not gridstage JSON output: %v", err)
	}
	if d.Weights != nil && d.Transition == nil {
		return Run{}, badInput(path, "holds an i.i.d. distribution (discretize %s), not a Markov chain; there is no transition matrix to plot", d.Kind)
	}
	if d.Grid == nil || d.Transition == nil || d.Kind == "" || d.Method == "" {
		return Run{}, badInput(path, "is not gridstage chain output: want the fields kind, method, grid and transition of `gridstage discretize --json`")
	}
	c, err := chainFromJSON(d)
	if err != nil {
		return Run{}, badInput(path, "%v", err)
	}
	cs := figures.Case{Label: d.Kind, Chain: c, Diag: d.Diagnostics}
	if d.Diagnostics != nil {
		if len(d.Diagnostics.States) != c.States() {
			return Run{}, badInput(path, "field diagnostics.states has %d entries for %d states", len(d.Diagnostics.States), c.States())
		}
		cs.Law = figures.Law{Mean: d.Diagnostics.True.Mean, SD: d.Diagnostics.True.SD,
			Gaussian: d.Kind == "ar1" && d.Process["innovation"] == "normal"}
	}
	if d.Baseline != nil {
		cs.BaselineDiag = d.Baseline.Diagnostics
	}
	job := Job{Process: d.Kind, Kind: d.Kind, Method: d.Method, Dim: c.Dim,
		Points: []Point{{Index: 0, Chains: []Chain{{Case: cs}}}}}
	return Run{Source: path, Jobs: []Job{job}}, nil
}

// chainFromJSON rebuilds and checks the shape of the chain.
func chainFromJSON(d discretizeJSON) (*solver.Chain, error) {
	n := len(d.Grid)
	if n == 0 || len(d.Grid[0]) == 0 {
		return nil, fmt.Errorf("field grid is empty")
	}
	method, err := solver.ParseMethod(d.Method)
	if err != nil {
		return nil, fmt.Errorf("field method: %v", err)
	}
	dim := len(d.Grid[0])
	c := &solver.Chain{Dim: dim, Method: method, Grid: make([]float64, 0, n*dim), Transition: make([]float64, 0, n*n)}
	for i, s := range d.Grid {
		if len(s) != dim {
			return nil, fmt.Errorf("field grid[%d] has %d values, want %d like grid[0]", i, len(s), dim)
		}
		c.Grid = append(c.Grid, s...)
	}
	if len(d.Transition) != n {
		return nil, fmt.Errorf("field transition has %d rows for %d states", len(d.Transition), n)
	}
	for i, row := range d.Transition {
		if len(row) != n {
			return nil, fmt.Errorf("field transition[%d] has %d entries for %d states", i, len(row), n)
		}
		c.Transition = append(c.Transition, row...)
	}
	c.Matched = d.Matched
	if c.Matched == nil {
		c.Matched = make([]int, n)
	}
	if len(c.Matched) != n {
		return nil, fmt.Errorf("field matched has %d entries for %d states", len(c.Matched), n)
	}
	if d.Moments != nil {
		c.Moments = *d.Moments
	}
	return c, nil
}
