package main

import (
	"bytes"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"

	"github.com/spf13/cobra"

	"gridstage/internal/atomicfile"
	"gridstage/report"
	"gridstage/report/figures"
)

func init() { extraCommands = append(extraCommands, newPlotCmd) }

// plotAllLimit is the most chains `plot` draws without a selection.
const plotAllLimit = 24

// pointFlags are the sweep-point selection flags shared by plot and report.
type pointFlags struct {
	point int
	where []string
}

func (f *pointFlags) register(cmd *cobra.Command) {
	cmd.Flags().IntVar(&f.point, "point", 0, "draw only the sweep point with this index")
	cmd.Flags().StringSliceVar(&f.where, "where", nil, "draw only points whose swept parameters have these values: name=value,... (repeatable)")
}

func (f *pointFlags) selection(cmd *cobra.Command) (report.Selection, error) {
	var s report.Selection
	if cmd.Flags().Changed("point") && cmd.Flags().Changed("where") {
		return s, badInput("--point and --where choose points in two ways: give one of them")
	}
	if cmd.Flags().Changed("point") {
		if f.point < 0 {
			return s, badInput("--point %d is out of range: want a sweep point index ≥ 0", f.point)
		}
		s.Point, s.HasPoint = f.point, true
	}
	for _, w := range f.where {
		name, v, err := report.ParseWhere(w)
		if err != nil {
			return s, badInput("%v", err)
		}
		if s.Where == nil {
			s.Where = map[string]float64{}
		}
		s.Where[name] = v
	}
	return s, nil
}

// loadRun reads PATH and applies the selection, mapping bad input to exit 2.
func loadRun(path string, sel report.Selection) (report.Run, error) {
	run, err := report.Load(path)
	if err == nil {
		run, err = run.Select(sel)
	}
	var ie *report.InputError
	if errors.As(err, &ie) {
		return report.Run{}, badInput("%v", err)
	}
	return run, err
}

func newPlotCmd() *cobra.Command {
	var (
		out, format string
		pf          pointFlags
	)
	cmd := &cobra.Command{
		Use:   "plot PATH [--out DIR] [--format png|svg] [--point N | --where name=value]",
		Short: "Draw every chain of a run: stationary mass, transition matrix, moment errors",
		Long: `Draw the figures of every chain in PATH (an output folder of gridstage run, one of
its files, or the JSON of gridstage discretize --json): the stationary
distribution against the true law, the transition matrix as a heat map, the
conditional-moment errors by state beside the baseline, the states in the plane
for VARs and the mass by age for life-cycle chains. One file per figure.`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			f, err := figures.ParseFormat(format)
			if err != nil {
				return badInput("--format %q is not recognised: want png or svg", format)
			}
			sel, err := pf.selection(cmd)
			if err != nil {
				return err
			}
			run, err := loadRun(args[0], sel)
			if err != nil {
				return err
			}
			if n := run.Chains(); sel.Empty() && n > plotAllLimit {
				return badInput("%s holds %d chains; choose a sweep point with --point N or --where name=value", args[0], n)
			}
			if out == "" {
				out = defaultPlotFolder(args[0])
			}
			if err := os.MkdirAll(out, 0o755); err != nil {
				return fmt.Errorf("cannot create --out folder %s: %w", out, err)
			}
			for _, j := range run.Jobs {
				for _, pt := range j.Points {
					if err := plotPoint(cmd, out, f, j, pt); err != nil {
						return err
					}
				}
			}
			return nil
		},
	}
	cmd.Flags().StringVar(&out, "out", "", "folder for the figure files (default: figures/ in the output folder, or beside a file)")
	cmd.Flags().StringVar(&format, "format", "png", "image format: png or svg")
	pf.register(cmd)
	return cmd
}

// defaultPlotFolder puts the figures in a figures/ folder inside an output
// folder, or beside a single file: with the output they draw, never in the
// current folder, which may hold sources.
func defaultPlotFolder(path string) string {
	if info, err := os.Stat(path); err == nil && info.IsDir() {
		return filepath.Join(path, "figures")
	}
	return filepath.Join(filepath.Dir(path), "figures")
}

// plotPoint writes the figures of one sweep point.
func plotPoint(cmd *cobra.Command, out string, f figures.Format, j report.Job, pt report.Point) error {
	stem := fmt.Sprintf("%s-p%d", safeName(j.Process), pt.Index)
	var figs []struct {
		name string
		fig  figures.Figure
	}
	pt.ResolveLaws()
	if pt.LifeCycle() {
		lc, err := figures.ForLifeCycle(pt.AgeFigures(j.Process + ", " + pt.Describe()))
		if err != nil {
			return err
		}
		figs = append(figs, struct {
			name string
			fig  figures.Figure
		}{stem + "-" + lc.Name, lc})
	}
	for _, c := range pt.Chains {
		c.Label = j.Process + ", " + pt.Describe()
		s := stem
		if pt.LifeCycle() {
			s += fmt.Sprintf("-age%d", c.Age)
			c.Label += fmt.Sprintf(", age %d", c.Age)
		}
		var fs []figures.Figure
		if pt.LifeCycle() {
			fs = figures.ForAge(c.Case)
		} else {
			var err error
			if fs, err = figures.For(c.Case); err != nil {
				return fmt.Errorf("%s %s: %w", j.Process, pt.Describe(), err)
			}
		}
		for _, fig := range fs {
			figs = append(figs, struct {
				name string
				fig  figures.Figure
			}{s + "-" + fig.Name, fig})
		}
	}
	for _, x := range figs {
		var buf bytes.Buffer
		if err := x.fig.Encode(&buf, f); err != nil {
			return err
		}
		path := filepath.Join(out, x.name+"."+string(f))
		if err := writeAtomic(path, buf.Bytes()); err != nil {
			return err
		}
		fmt.Fprintln(cmd.OutOrStdout(), path)
	}
	return nil
}

// safeName keeps letters, digits, '-', '_' and '.' of a process name for
// use in a file name.
func safeName(s string) string {
	return strings.Map(func(r rune) rune {
		if r == '-' || r == '_' || r == '.' || (r >= 'a' && r <= 'z') || (r >= 'A' && r <= 'Z') || (r >= '0' && r <= '9') {
			return r
		}
		return '_'
	}, s)
}

// writeAtomic writes data to path so a crash never leaves a file that
// looks complete.
func writeAtomic(path string, data []byte) error {
	return atomicfile.WriteBytes(path, data, 0o666)
}
