package main

import (
	"fmt"
	"strconv"

	"github.com/spf13/cobra"

	"gridstage/solver"
)

func newDiscretizeCmd() *cobra.Command {
	cmd := &cobra.Command{
		Use:   "discretize KIND",
		Short: "Discretize one process given on the command line and print the chain",
		Long: `Discretize one process given on the command line.

Kinds:
  ar1   first-order autoregression x' = (1-rho) mean + rho x + sigma z
  var   vector autoregression x' = intercept + coef x + e, e ~ N(0, cov)
  iid   a static distribution (returns, transitory income) as weighted points

Without --json the grid, the transition matrix and a diagnostics table
(with a baseline method beside it) are printed for reading; with --json
one JSON object is printed for scripts.`,
		Args: func(_ *cobra.Command, args []string) error {
			if len(args) == 0 {
				return badInput("discretize needs a process kind: ar1, var or iid")
			}
			return badInput("discretize: unknown process kind %q: want ar1, var or iid", args[0])
		},
		RunE: func(*cobra.Command, []string) error { return nil },
	}
	cmd.AddCommand(newAR1Cmd(), newIIDCmd())
	for _, add := range extraKinds {
		cmd.AddCommand(add())
	}
	return cmd
}

// extraKinds lets further process kinds register with `discretize`.
var extraKinds []func() *cobra.Command

// methodSettings are the flags every discretization shares.
type methodSettings struct {
	states        statesFlag
	moments       int
	method, nodes string
	matching      string
	width         float64
	floden        bool
	compare       string
	json          bool
}

func (m *methodSettings) register(cmd *cobra.Command, withMethod bool) {
	fs := cmd.Flags()
	m.states.register(fs, 9, "number of grid points (2 to "+strconv.Itoa(solver.MaxStates)+")")
	fs.StringVar(&m.nodes, "nodes", "", nodesHelp)
	fs.StringVar(&m.matching, "matching", "", matchingHelp)
	if withMethod {
		fs.IntVar(&m.moments, "moments", 0, "conditional moments to match exactly with maxent (default 4, fewer for heavy-tailed innovations)")
		fs.Float64Var(&m.width, "width", 0, "half-width of lattice, gauss-legendre and tauchen grids in unconditional s.d. (default sqrt(states-1); 3 for tauchen)")
	} else {
		fs.IntVar(&m.moments, "moments", 0, "moments to match exactly (default 4, fewer when the law lacks them)")
		fs.Float64Var(&m.width, "width", 0, "half-width of lattice and gauss-legendre grids in s.d. of the law, clipped to its support (default sqrt(states-1))")
	}
	fs.BoolVar(&m.json, "json", false, "print one JSON object instead of tables")
	if withMethod {
		fs.StringVar(&m.method, "method", "maxent", "maxent, tauchen, tauchen-hussey, rouwenhorst or adda-cooper")
		fs.BoolVar(&m.floden, "floden", false, "tauchen-hussey: use the Flodén (2008) base standard deviation")
		fs.StringVar(&m.compare, "compare", "", "baseline method shown beside the chain, or none (default rouwenhorst; maxent when --method is rouwenhorst)")
	}
}

// settings validates the shared flags and converts them.
func (m *methodSettings) settings(cmd *cobra.Command) (solver.Settings, error) {
	var s solver.Settings
	if !m.states.auto {
		if err := intRange("states", m.states.n, 2, solver.MaxStates); err != nil {
			return s, err
		}
	}
	if cmd.Flags().Changed("moments") {
		if err := intRange("moments", m.moments, 0, 8); err != nil {
			return s, err
		}
	}
	nodes, err := nodeRule(m.nodes)
	if err != nil {
		return s, err
	}
	if cmd.Flags().Changed("width") {
		if err := positive("width", m.width); err != nil {
			return s, err
		}
	}
	method := solver.MaxEnt
	if m.method != "" {
		if err := choice("method", m.method, solver.MethodNames()); err != nil {
			return s, err
		}
		method, _ = solver.ParseMethod(m.method)
	}
	if cmd.Flags().Changed("moments") && method != solver.MaxEnt {
		return s, badInput("--moments applies to --method maxent only: %s matches a fixed set of moments", method)
	}
	if cmd.Flags().Changed("nodes") && method != solver.MaxEnt {
		return s, badInput("--nodes applies to --method maxent only: %s places its own grid", method)
	}
	if m.floden && method != solver.TauchenHussey {
		return s, badInput("--floden applies to --method tauchen-hussey only")
	}
	matching, err := matchingPolicy(m.matching, method)
	if err != nil {
		return s, err
	}
	if err := m.states.check(cmd.Flags(), method); err != nil {
		return s, err
	}
	return solver.Settings{States: m.states.n, Moments: m.moments, Method: method, Nodes: nodes, Width: m.width, Floden: m.floden, Matching: matching}, nil
}

// matchingHelp is the help of --matching, shared by every discretize kind.
const matchingHelp = "per-state matching policy (maxent only): exact (the default; the published method, fewer moments where the grid cannot carry them) or smooth (moments relaxed continuously, so the chain is smooth in the parameters: for estimation)"

// matchingPolicy validates --matching; empty means the default, exact.
func matchingPolicy(name string, method solver.Method) (solver.Matching, error) {
	if name == "" {
		return solver.MatchExact, nil
	}
	if err := choice("matching", name, solver.MatchingNames()); err != nil {
		return 0, err
	}
	if method != solver.MaxEnt {
		return 0, badInput("--matching applies to --method maxent only: %s solves no moment-matching problem", method)
	}
	m, _ := solver.ParseMatching(name)
	return m, nil
}

// nodesHelp is the help of --nodes, shared by every discretize kind.
const nodesHelp = "placement of the grid points (maxent only): lattice (the default; equally spaced over ± width), gauss-hermite (for iid lognormal: in logs), gauss-legendre (the default for iid beta, on its whole support), or equal-mass (at quantiles of the distribution)"

// nodeRule validates --nodes; empty means the default, lattice.
func nodeRule(name string) (solver.NodeRule, error) {
	if name == "" {
		return solver.NodesLattice, nil
	}
	if err := choice("nodes", name, solver.NodeRuleNames()); err != nil {
		return 0, err
	}
	r, _ := solver.ParseNodeRule(name)
	return r, nil
}

// entry adds the shared flags to a manifest process entry: states and
// method always, the others when given (the manifest fills in the same
// defaults as these flags).
func (m *methodSettings) entry(cmd *cobra.Command, e map[string]any) map[string]any {
	m.states.entry(cmd.Flags(), e)
	method := m.method
	if method == "" {
		method = "maxent"
	}
	e["method"] = method
	fs := cmd.Flags()
	if method == "maxent" && m.nodes != "" {
		e["nodes"] = m.nodes
	}
	if method == "maxent" && m.matching != "" {
		e["matching"] = m.matching
	}
	if fs.Changed("moments") {
		e["moments"] = m.moments
	}
	if fs.Changed("width") {
		e["width"] = m.width
	}
	if m.floden {
		e["floden"] = true
	}
	if m.compare != "" {
		e["compare"] = m.compare
	}
	return e
}

// checkCompare validates --compare; the default baseline is the
// manifest's (the process entry leaves compare out).
func (m *methodSettings) checkCompare() error {
	if m.compare == "" {
		return nil
	}
	return choice("compare", m.compare, append(solver.MethodNames(), "none"))
}

// paramFlags maps solver parameter names to the flags that set them.
var paramFlags = map[string]string{
	"rho": "rho", "sigma": "sigma", "mean": "mean", "states": "states",
	"moments": "moments", "width": "width", "nodes": "nodes", "matching": "matching",
}

var _ = fmt.Sprint
