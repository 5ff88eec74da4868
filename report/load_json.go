package report

import (
	"bytes"
	"encoding/json"
	"fmt"
	"os"

	"gridstage/report/figures"
	"gridstage/solver"
)

// discretizeJSON is the part of `gridstage discretize KIND --json` output a
// report needs (grid: one array per state; transition: one array per row).
type discretizeJSON struct {
	Kind        string          `json:"kind"`
	Process     map[string]any  `json:"process"`
	Method      string          `json:"method"`
	Moments     *int            `json:"moments"`
	Grid        [][]float64     `json:"grid"`
	Transition  [][]float64     `json:"transition"`
	Matched     []int           `json:"matched"`
	Diagnostics json.RawMessage `json:"diagnostics"`
	Weights     []float64       `json:"weights"`
	Baseline    *struct {
		Method      string          `json:"method"`
		Grid        [][]float64     `json:"grid"`
		Transition  [][]float64     `json:"transition"`
		Diagnostics json.RawMessage `json:"diagnostics"`
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
	c, err := chainFromJSON(d.Method, d.Grid, d.Transition, d.Matched, d.Moments)
	if err != nil {
		return Run{}, badInput(path, "%v", err)
	}
	cs := figures.Case{Label: d.Kind, Chain: c}
	if d.Kind == "var" {
		// Vector diagnostics have their own shape; recompute the
		// first-component diagnostics that figures and verdicts use from
		// the process, as gridstage run stores them.
		if err := varCase(&cs, d); err != nil {
			return Run{}, badInput(path, "%v", err)
		}
	} else if len(d.Diagnostics) > 0 {
		var diag solver.Diagnostics
		if err := json.Unmarshal(d.Diagnostics, &diag); err != nil {
			return Run{}, badInput(path, "field diagnostics: %v", err)
		}
		if len(diag.States) != c.States() {
			return Run{}, badInput(path, "field diagnostics.states has %d entries for %d states", len(diag.States), c.States())
		}
		cs.Diag = &diag
		cs.Law = figures.Law{Mean: diag.True.Mean, SD: diag.True.SD,
			Gaussian: d.Kind == "ar1" && normalInnovation(d.Process)}
		if d.Baseline != nil && len(d.Baseline.Diagnostics) > 0 {
			var bd solver.Diagnostics
			if err := json.Unmarshal(d.Baseline.Diagnostics, &bd); err != nil {
				return Run{}, badInput(path, "field baseline.diagnostics: %v", err)
			}
			cs.BaselineDiag = &bd
		}
	}
	job := Job{Process: d.Kind, Kind: d.Kind, Method: d.Method, Dim: c.Dim,
		Points: []Point{{Index: 0, Chains: []Chain{{Case: cs}}}}}
	return Run{Source: path, Jobs: []Job{job}}, nil
}

// chainFromJSON rebuilds and checks the shape of a chain.
func chainFromJSON(methodName string, grid, transition [][]float64, matched []int, moments *int) (*solver.Chain, error) {
	n := len(grid)
	if n == 0 || len(grid[0]) == 0 {
		return nil, fmt.Errorf("field grid is empty")
	}
	method, err := solver.ParseMethod(methodName)
	if err != nil {
		return nil, fmt.Errorf("field method: %v", err)
	}
	dim := len(grid[0])
	c := &solver.Chain{Dim: dim, Method: method, Grid: make([]float64, 0, n*dim), Transition: make([]float64, 0, n*n)}
	for i, s := range grid {
		if len(s) != dim {
			return nil, fmt.Errorf("field grid[%d] has %d values, want %d like grid[0]", i, len(s), dim)
		}
		c.Grid = append(c.Grid, s...)
	}
	if len(transition) != n {
		return nil, fmt.Errorf("field transition has %d rows for %d states", len(transition), n)
	}
	for i, row := range transition {
		if len(row) != n {
			return nil, fmt.Errorf("field transition[%d] has %d entries for %d states", i, len(row), n)
		}
		c.Transition = append(c.Transition, row...)
	}
	c.Matched = matched
	if c.Matched == nil {
		c.Matched = make([]int, n)
	}
	if len(c.Matched) != n {
		return nil, fmt.Errorf("field matched has %d entries for %d states", len(c.Matched), n)
	}
	if moments != nil {
		c.Moments = *moments
	}
	return c, nil
}

// varCase fills the diagnostics and law of a VAR chain from the process
// parameters in the JSON (coef, cov, intercept; row-major).
func varCase(cs *figures.Case, d discretizeJSON) error {
	num := func(key string) ([]float64, error) {
		raw, ok := d.Process[key].([]any)
		if !ok {
			return nil, fmt.Errorf("field process.%s: want an array of numbers", key)
		}
		out := make([]float64, len(raw))
		for i, v := range raw {
			f, ok := v.(float64)
			if !ok {
				return nil, fmt.Errorf("field process.%s[%d]: want a number", key, i)
			}
			out[i] = f
		}
		return out, nil
	}
	var p solver.VAR
	var err error
	if p.Coef, err = num("coef"); err != nil {
		return err
	}
	if p.Cov, err = num("cov"); err != nil {
		return err
	}
	if _, ok := d.Process["intercept"]; ok {
		if p.Intercept, err = num("intercept"); err != nil {
			return err
		}
	}
	if err := p.Validate(); err != nil {
		return fmt.Errorf("field process: %v", err)
	}
	if p.Dim() != cs.Chain.Dim {
		return fmt.Errorf("field process describes a VAR of dimension %d, the grid has %d", p.Dim(), cs.Chain.Dim)
	}
	diag := solver.Diagnose(cs.Chain, p)
	cs.Diag = &diag
	cs.Law = figures.Law{Mean: diag.True.Mean, SD: diag.True.SD, Gaussian: true, Cov: p.StationaryCov(), MeanVec: p.StationaryMean()}
	if b := d.Baseline; b != nil && b.Grid != nil {
		bc, err := chainFromJSON(b.Method, b.Grid, b.Transition, nil, nil)
		if err != nil {
			return fmt.Errorf("baseline: %v", err)
		}
		bd := solver.Diagnose(bc, p)
		cs.BaselineDiag = &bd
	}
	return nil
}

// normalInnovation reports whether a discretize ar1 process object has a
// normal innovation ({"innovation": {"law": "normal"}}, as in a manifest).
func normalInnovation(process map[string]any) bool {
	law, _ := process["innovation"].(map[string]any)
	return law["law"] == "normal"
}
