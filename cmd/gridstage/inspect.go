package main

import (
	"encoding/json"
	"fmt"
	"io"
	"math"
	"os"
	"sort"
	"strconv"
	"strings"

	"github.com/spf13/cobra"

	"gridstage/formats"
	"gridstage/internal/finitejson"
	"gridstage/internal/plural"
	"gridstage/solver"
)

func init() { extraCommands = append(extraCommands, newInspectCmd) }

// inspectSelection says which chain of a set to show.
type inspectSelection struct {
	point int // −1: the first point (or the first matching where)
	where map[string]float64
	age   int // −1: the point's first age
}

func newInspectCmd() *cobra.Command {
	var (
		asJSON     bool
		point, age int
		process    string
		where      []string
	)
	cmd := &cobra.Command{
		Use:   "inspect PATH [--json] [--point N | --where name=value,...] [--age T]",
		Short: "Show one chain of an output: grid, transition matrix, diagnostics",
		Long: `Show one chain of a gridstage output: its grid, transition matrix and
diagnostics, with the sweep point's parameter values and spec hash.

PATH is an output folder or any file of a set. Choose the sweep point by
index (--point) or by swept parameter values (--where rho=0.9,sigma=0.1;
values match within a relative 1e-12), and the age of a life-cycle chain
with --age. By default the first point and its first age are shown. When
a folder holds several processes, name one with --process.

Vector chains (kinds var, ar1-volatility, product) show every state's
vector and the largest standardized errors of its conditional mean vector
and covariance matrix, and the stationary means and covariances of chain
and process. A life-cycle age shows the move from its grid to the next
age's grid.`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			sel := inspectSelection{point: -1, age: -1}
			if cmd.Flags().Changed("point") {
				if point < 0 {
					return badInput("--point %d is out of range: want a sweep point index ≥ 0", point)
				}
				sel.point = point
			}
			if cmd.Flags().Changed("age") {
				if age < 0 {
					return badInput("--age %d is out of range: want an age ≥ 0", age)
				}
				sel.age = age
			}
			if len(where) > 0 {
				if sel.point >= 0 {
					return badInput("--point and --where both choose the sweep point: give one")
				}
				var err error
				if sel.where, err = parseWhere(strings.Join(where, ",")); err != nil {
					return err
				}
			}
			ref, err := inspectRef(args[0], process)
			if err != nil {
				return err
			}
			return inspect(cmd.OutOrStdout(), ref, sel, asJSON)
		},
	}
	fs := cmd.Flags()
	fs.BoolVar(&asJSON, "json", false, "print one JSON object instead of tables")
	fs.IntVar(&point, "point", 0, "sweep point index")
	fs.StringSliceVar(&where, "where", nil, "choose the sweep point by swept parameter values: name=value,... (repeatable)")
	fs.IntVar(&age, "age", 0, "age of a life-cycle chain")
	fs.StringVar(&process, "process", "", "process to show when the folder holds several")
	return cmd
}

// parseWhere parses name=value,... into a map.
func parseWhere(s string) (map[string]float64, error) {
	out := map[string]float64{}
	for _, part := range strings.Split(s, ",") {
		name, val, ok := strings.Cut(strings.TrimSpace(part), "=")
		if !ok || name == "" {
			return nil, badInput("--where %q: want name=value pairs separated by commas", s)
		}
		v, err := strconv.ParseFloat(strings.TrimSpace(val), 64)
		if err != nil {
			return nil, badInput("--where %q: value of %s is %q, want a number", s, name, val)
		}
		out[strings.TrimSpace(name)] = v
	}
	return out, nil
}

// inspectRef finds the set to show from a folder or a file path.
func inspectRef(path, process string) (formats.SetRef, error) {
	fi, err := os.Stat(path)
	if err != nil {
		return formats.SetRef{}, badInput("%s does not exist or cannot be read", path)
	}
	if !fi.IsDir() {
		ref, ok := formats.RefOf(path)
		if !ok {
			return formats.SetRef{}, badInput("%s is not gridstage output: want a folder or a file named <process>.<table>.parquet or .arrow", path)
		}
		return ref, nil
	}
	refs, err := formats.FindSets(path)
	if err != nil {
		return formats.SetRef{}, badInput("cannot list %s: %v", path, err)
	}
	var names []string
	for _, r := range refs {
		if process != "" && r.Process == process {
			return r, nil
		}
		names = append(names, r.Process)
	}
	switch {
	case len(refs) == 0:
		return formats.SetRef{}, badInput("%s is not gridstage output: it holds no <process>.points.parquet or .arrow file", path)
	case process != "":
		return formats.SetRef{}, badInput("--process %q: %s holds %s", process, path, strings.Join(names, ", "))
	}
	distinct := map[string]bool{}
	for _, n := range names {
		distinct[n] = true
	}
	if len(distinct) > 1 {
		sort.Strings(names)
		return formats.SetRef{}, badInput("%s holds several processes (%s): choose one with --process", path, strings.Join(names, ", "))
	}
	return refs[0], nil
}

// matches reports whether a record's parameters match a --where filter.
func matches(params, where map[string]float64) bool {
	for name, want := range where {
		got := params[name]
		if math.Abs(got-want) > 1e-12*math.Max(1, math.Abs(want)) {
			return false
		}
	}
	return true
}

func inspect(w io.Writer, ref formats.SetRef, sel inspectSelection, asJSON bool) error {
	r, err := formats.Open(ref, nil)
	if err != nil {
		if formats.IsNotOutput(err) {
			return badInput("%v", err)
		}
		return err
	}
	defer r.Close()
	for name := range sel.where {
		found := false
		for _, p := range r.Header.Params {
			found = found || p == name
		}
		if !found {
			return badInput("--where: %s is not a swept parameter of %s (swept: %s)", name, ref.Process, strings.Join(r.Header.Params, ", "))
		}
	}
	// One pass over the set: the records of the first point that fits the
	// selection are kept; every fitting point is counted, so that an
	// ambiguous --where is refused rather than resolved silently.
	var kept []formats.Record
	var matched []formats.Record // the first record of each fitting point
	for {
		rec, err := r.Next()
		if err == io.EOF {
			break
		}
		if err != nil {
			return err
		}
		ok := (sel.point < 0 || rec.Point == sel.point) && (sel.where == nil || matches(rec.Params, sel.where))
		if !ok {
			continue
		}
		if sel.point < 0 && sel.where == nil && len(matched) > 0 && rec.Point != matched[0].Point {
			break // no selection: the first point, which the header names
		}
		if len(matched) == 0 || matched[len(matched)-1].Point != rec.Point {
			matched = append(matched, rec)
		}
		if rec.Point == matched[0].Point {
			kept = append(kept, rec)
		}
	}
	switch {
	case len(matched) == 0 && sel.point >= 0:
		return badInput("%s has no sweep point %d (it has %s, numbered from 0)", ref.Process, sel.point, plural.Count(r.Points, "point", "points"))
	case len(matched) == 0 && sel.where != nil:
		return badInput("no sweep point of %s matches --where %s", ref.Process, whereText(sel.where))
	case len(matched) == 0:
		return badInput("%s holds no chains", ref.Process)
	case len(matched) > 1:
		const shown = 10
		var list []string
		for i, m := range matched {
			if i == shown {
				list = append(list, fmt.Sprintf("… %d more", len(matched)-shown))
				break
			}
			list = append(list, "point "+strconv.Itoa(m.Point)+" ("+pointParams(r.Header.Params, m.Params)+")")
		}
		return badInput("--where %s matches %d sweep points of %s: %s; add parameters to --where or choose one with --point N",
			whereText(sel.where), len(matched), ref.Process, strings.Join(list, "; "))
	}
	for i := range kept {
		if sel.age >= 0 && kept[i].Age != sel.age {
			continue
		}
		// The next age's grid, where this age's transitions lead.
		var next *formats.Record
		if kept[i].Chain.Transition != nil && i+1 < len(kept) {
			next = &kept[i+1]
		}
		return showRecord(w, r, &kept[i], next, asJSON)
	}
	last := kept[len(kept)-1]
	ages := "age 0 only"
	if len(kept) > 1 {
		ages = fmt.Sprintf("ages 0 to %d", last.Age)
		if last.Chain.Transition == nil {
			ages += fmt.Sprintf(" (age %d is the final grid, which no transition leaves)", last.Age)
		}
	}
	return badInput("sweep point %d of %s has no age %d: it has %s", kept[0].Point, ref.Process, sel.age, ages)
}

// whereText writes a --where selection back as name=value,...
func whereText(where map[string]float64) string {
	names := make([]string, 0, len(where))
	for k := range where {
		names = append(names, k)
	}
	sort.Strings(names)
	parts := make([]string, len(names))
	for i, k := range names {
		parts[i] = k + "=" + strconv.FormatFloat(where[k], 'g', -1, 64)
	}
	return strings.Join(parts, ",")
}

// pointParams writes a point's swept values in the set's order.
func pointParams(names []string, values map[string]float64) string {
	parts := make([]string, len(names))
	for i, p := range names {
		parts[i] = p + "=" + strconv.FormatFloat(values[p], 'g', -1, 64)
	}
	return strings.Join(parts, ", ")
}

// inspectJSON is what inspect --json prints.
type inspectJSON struct {
	Run        string              `json:"run"`
	Process    string              `json:"process"`
	Kind       string              `json:"kind"`
	Point      int                 `json:"point"`
	Params     map[string]float64  `json:"params"`
	Age        int                 `json:"age"`
	SpecHash   string              `json:"spec_hash"`
	ChainHash  string              `json:"chain_hash"`
	Numeric    string              `json:"numeric_version"`
	Tool       string              `json:"tool_version"`
	Spec       json.RawMessage     `json:"spec,omitempty"`
	Method     string              `json:"method"`
	Moments    int                 `json:"moments"`
	Grid       [][]float64         `json:"grid"`
	Transition [][]float64         `json:"transition"`
	Initial    []float64           `json:"initial,omitempty"`
	Matched    []int               `json:"matched"`
	Diag       *solver.Diagnostics `json:"diagnostics,omitempty"`
	Baseline   *solver.Diagnostics `json:"baseline_diagnostics,omitempty"`
	// NextGrid is the grid of the next age, for a life-cycle age: the
	// columns of the transition matrix are its states.
	NextGrid       [][]float64         `json:"next_grid,omitempty"`
	Vector         *formats.VectorDiag `json:"vector_diagnostics,omitempty"`
	BaselineVector *formats.VectorDiag `json:"baseline_vector_diagnostics,omitempty"`
}

// showRecord prints one chain; next is the record of the point's next age
// (nil when there is none).
func showRecord(w io.Writer, r *formats.Reader, rec *formats.Record, next *formats.Record, asJSON bool) error {
	c := rec.Chain
	terminal := c.Transition == nil
	lifeCycle := next != nil || rec.Age > 0
	if asJSON {
		j := inspectJSON{Run: r.Header.Run, Process: r.Header.Process, Kind: r.Header.Kind, Point: rec.Point,
			Params: rec.Params, Age: rec.Age, SpecHash: rec.SpecHash, ChainHash: rec.ChainHash,
			Numeric: r.Header.Numeric, Tool: r.Header.Tool, Method: c.Method.String(), Moments: c.Moments,
			Grid: gridRows(c), Transition: [][]float64{}, Initial: rec.Initial, Matched: c.Matched, Baseline: rec.Baseline,
			Vector: rec.Vector, BaselineVector: rec.BaselineVector}
		if next != nil {
			j.NextGrid = gridRows(next.Chain)
		}
		if json.Valid(rec.Spec) {
			j.Spec = rec.Spec
		}
		if !terminal {
			j.Transition = transitionRows(c)
			j.Diag = &rec.Diag
		}
		return finitejson.Encode(w, j)
	}
	fmt.Fprintf(w, "run %s, process %s (%s), sweep point %d (%s in the set)", r.Header.Run, r.Header.Process, r.Header.Kind,
		rec.Point, plural.Count(r.Points, "point", "points"))
	if len(r.Header.Params) > 0 {
		fmt.Fprintf(w, ", %s", pointParams(r.Header.Params, rec.Params))
	}
	fmt.Fprintf(w, ", age %d\nspec hash %s\n\n", rec.Age, rec.SpecHash)
	if terminal {
		fmt.Fprintf(w, "final age of a life-cycle chain: grid only, no transition\n")
		fmt.Fprintf(w, "state\tlevel\n")
		for i := 0; i < c.States(); i++ {
			fmt.Fprintf(w, "%d\t%s\n", i, levelList(c.State(i)))
		}
		return nil
	}
	if lifeCycle {
		fmt.Fprintf(w, "life-cycle age %d: moves from the grid of age %d (rows) to the grid of age %d (columns)\n", rec.Age, rec.Age, rec.Age+1)
		if next != nil {
			fmt.Fprintf(w, "grid of age %d: %s\n", rec.Age+1, stateList(next.Chain))
		}
		fmt.Fprintln(w)
	}
	if c.Dim > 1 || rec.Vector != nil {
		return printVectorRecord(w, r.Header.Kind, rec, lifeCycle)
	}
	rep := chainReport{Kind: r.Header.Kind, Chain: c, Diag: rec.Diag}
	if lifeCycle {
		rep.MomentsHeading = fmt.Sprintf("marginal moments at age %d (autocorrelation: between ages %d and %d)", rec.Age+1, rec.Age, rec.Age+1)
	}
	if rec.Baseline != nil {
		m, err := solver.ParseMethod(rec.Baseline.Method)
		if err == nil {
			rep.Baseline, rep.BaselineDiag = &solver.Chain{Method: m}, rec.Baseline
		}
	}
	if rec.Initial != nil {
		fmt.Fprintf(w, "initial distribution: %s\n\n", levelList(rec.Initial))
	}
	return rep.printText(w)
}
