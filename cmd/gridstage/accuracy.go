package main

import (
	"fmt"
	"io"
	"math"
	"slices"
	"strconv"
	"strings"
	"text/tabwriter"

	"github.com/spf13/cobra"
	"github.com/spf13/pflag"

	"gridstage/accuracy"
	"gridstage/internal/finitejson"
	"gridstage/internal/plural"
	"gridstage/solver"
)

func init() { extraCommands = append(extraCommands, newAccuracyCmd) }

// studyFlags are the simulation flags of `accuracy`.
type studyFlags struct {
	methods      []string
	reps, length int
	seed         uint64
	json         bool
}

func (f *studyFlags) register(fs *pflag.FlagSet, defaultMethods []string) {
	fs.StringSliceVar(&f.methods, "methods", defaultMethods, "methods to compare, comma-separated, each at the same number of states")
	fs.IntVar(&f.reps, "reps", 200, "replications (simulated samples) per method, 1 to 100000")
	fs.IntVar(&f.length, "length", 500, "observations per simulated sample, 10 to 10000000")
	fs.Uint64Var(&f.seed, "seed", 1, "seed of the PCG random number generator")
	fs.BoolVar(&f.json, "json", false, "print one JSON object instead of tables")
}

func (f *studyFlags) config(allowed []string) (accuracy.Config, []solver.Method, error) {
	if err := intRange("reps", f.reps, 1, 100000); err != nil {
		return accuracy.Config{}, nil, err
	}
	if err := intRange("length", f.length, 10, 10000000); err != nil {
		return accuracy.Config{}, nil, err
	}
	if len(f.methods) == 0 {
		return accuracy.Config{}, nil, badInput("--methods is empty: want one or more of %s", strings.Join(allowed, ", "))
	}
	var ms []solver.Method
	seen := map[string]bool{}
	for _, m := range f.methods {
		if !slices.Contains(allowed, m) && m == solver.AddaCooper.String() {
			if err := univariateOnly("methods", m); err != nil {
				return accuracy.Config{}, nil, err
			}
		}
		if err := choice("methods", m, allowed); err != nil {
			return accuracy.Config{}, nil, err
		}
		if seen[m] {
			return accuracy.Config{}, nil, badInput("--methods lists %q twice", m)
		}
		seen[m] = true
		pm, _ := solver.ParseMethod(m)
		ms = append(ms, pm)
	}
	return accuracy.Config{Reps: f.reps, Length: f.length, Seed: f.seed}, ms, nil
}

func newAccuracyCmd() *cobra.Command {
	cmd := &cobra.Command{
		Use:   "accuracy KIND [flags]",
		Short: "Compare methods by estimating the process back from each chain",
		Long: `Compare discretization methods the way an applied economist would notice the
difference: by estimating the process back from each chain.

For each method, at the same number of states, it reports
  - the VAR implied exactly by the chain's stationary distribution
    (population least squares of x' on (1, x), no simulation), and
  - the bias and mean squared error of OLS estimates on seeded samples
    simulated from the chain,
next to OLS on samples simulated from the true process: the sampling
noise no discretization can remove.

Kinds: ar1, var.`,
		Args: func(_ *cobra.Command, args []string) error {
			if len(args) == 0 {
				return badInput("accuracy needs a process kind: ar1 or var")
			}
			return badInput("accuracy: unknown process kind %q: want ar1 or var", args[0])
		},
		RunE: func(*cobra.Command, []string) error { return nil },
	}
	cmd.AddCommand(newAccuracyAR1Cmd(), newAccuracyVARCmd())
	return cmd
}

func newAccuracyAR1Cmd() *cobra.Command {
	var (
		rho, sigma, mean float64
		states           int
		sf               studyFlags
	)
	methods := []string{"maxent", "tauchen", "tauchen-hussey", "rouwenhorst", "adda-cooper"}
	cmd := &cobra.Command{
		Use:   "ar1 --rho R --sigma S [--mean M] --states N [flags]",
		Short: "Accuracy study for a Gaussian AR(1)",
		Args:  cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			for _, f := range []string{"rho", "sigma"} {
				if !cmd.Flags().Changed(f) {
					return badInput("--%s is required", f)
				}
			}
			if err := intRange("states", states, 2, solver.MaxStates); err != nil {
				return err
			}
			cfg, ms, err := sf.config(methods)
			if err != nil {
				return err
			}
			p := solver.AR1{Mean: mean, Rho: rho, Sigma: sigma}
			if err := p.Validate(); err != nil {
				return flagError(err, paramFlags)
			}
			var cands []accuracy.Candidate
			for _, m := range ms {
				c, err := p.Discretize(solver.Settings{States: states, Method: m})
				if err != nil {
					return flagError(err, paramFlags)
				}
				cands = append(cands, accuracy.Candidate{Name: m.String(), Chain: c})
			}
			truth := solver.VAR{Intercept: []float64{(1 - rho) * mean}, Coef: []float64{rho}, Cov: []float64{sigma * sigma}}
			rep, err := accuracy.Run(truth, cands, cfg)
			if err != nil {
				return err
			}
			title := fmt.Sprintf("AR(1) rho = %g, sigma = %g, mean = %g; %d states", rho, sigma, mean, states)
			return printStudy(cmd.OutOrStdout(), title, "ar1", rep, sf.json)
		},
	}
	fs := cmd.Flags()
	fs.Float64Var(&rho, "rho", 0, "persistence, in (-1, 1) (required)")
	fs.Float64Var(&sigma, "sigma", 0, "innovation standard deviation, > 0 (required)")
	fs.Float64Var(&mean, "mean", 0, "unconditional mean")
	fs.IntVar(&states, "states", 9, "grid points (2 to "+strconv.Itoa(solver.MaxStates)+")")
	sf.register(fs, methods)
	return cmd
}

func newAccuracyVARCmd() *cobra.Command {
	var (
		vf     varFlags
		states int
		axes   string
		sf     studyFlags
	)
	methods := []string{"maxent", "tauchen"}
	cmd := &cobra.Command{
		Use:   "var --coef LIST --cov LIST [--intercept LIST] --states N [flags]",
		Short: "Accuracy study for a Gaussian VAR(1) (matrices as row-major lists)",
		Args:  cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			p, err := vf.process(cmd)
			if err != nil {
				return err
			}
			if err := axisStates(states, p.Dim()); err != nil {
				return err
			}
			if err := choice("axes", axes, solver.AxesNames()); err != nil {
				return err
			}
			cfg, ms, err := sf.config(methods)
			if err != nil {
				return err
			}
			ax, _ := solver.ParseAxes(axes)
			var cands []accuracy.Candidate
			for _, m := range ms {
				c, err := p.Discretize(solver.Settings{States: states, Method: m, Axes: ax})
				if err != nil {
					return flagError(err, paramFlags)
				}
				cands = append(cands, accuracy.Candidate{Name: m.String(), Chain: c})
			}
			rep, err := accuracy.Run(p, cands, cfg)
			if err != nil {
				return err
			}
			title := fmt.Sprintf("VAR(1) of dimension %d; %d states per axis (%d in all)", p.Dim(), states, cands[0].Chain.States())
			return printStudy(cmd.OutOrStdout(), title, "var", rep, sf.json)
		},
	}
	fs := cmd.Flags()
	vf.register(fs)
	fs.IntVar(&states, "states", 9, "grid points per axis")
	fs.StringVar(&axes, "axes", "principal", "maxent grid orientation: principal (axes of the stationary covariance) or coordinate")
	sf.register(fs, methods)
	return cmd
}

// printStudy prints the report as tables or as one JSON object.
func printStudy(w io.Writer, title, kind string, rep accuracy.Report, asJSON bool) error {
	if asJSON {
		return finitejson.Encode(w, struct {
			Kind string `json:"kind"`
			accuracy.Report
		}{kind, rep})
	}
	cfg := rep.Config
	fmt.Fprintf(w, "accuracy study: %s\n%s of %s, seed %d\n", title, plural.Count(cfg.Reps, "replication", "replications"), plural.Count(cfg.Length, "observation", "observations"), cfg.Seed)

	fmt.Fprintln(w, "\n1. VAR implied by each chain's stationary distribution (population least squares; chain minus truth)")
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	head := "parameter\ttruth\t"
	for _, m := range rep.Methods {
		head += m.Name + "\t"
	}
	fmt.Fprintln(tw, head)
	truth := rep.Truth.Params()
	for k, name := range rep.Names {
		line := fmt.Sprintf("%s\t%.6g\t", name, truth[k])
		for _, m := range rep.Methods {
			line += sci(m.PopulationErr[k]) + "\t"
		}
		fmt.Fprintln(tw, line)
	}
	line := "max |coef error|\t\t"
	for _, m := range rep.Methods {
		line += sci(m.PopCoefErr) + "\t"
	}
	fmt.Fprintln(tw, line)
	line = "max |cov error| (corr. units)\t\t"
	for _, m := range rep.Methods {
		line += sci(m.PopCovErr) + "\t"
	}
	fmt.Fprintln(tw, line)
	line = "fallback states\t\t"
	for _, m := range rep.Methods {
		line += fmt.Sprintf("%d\t", m.Fallbacks)
	}
	fmt.Fprintln(tw, line)
	tw.Flush()

	sources := append([]accuracy.Result{rep.Floor}, rep.Methods...)
	for _, part := range []struct {
		title string
		get   func(accuracy.Result, int) float64
	}{
		{"2. bias of OLS estimates on simulated samples (mean of estimate minus truth)", func(r accuracy.Result, k int) float64 { return r.Bias[k] }},
		{"3. mean squared error of OLS estimates on simulated samples", func(r accuracy.Result, k int) float64 { return r.MSE[k] }},
	} {
		fmt.Fprintf(w, "\n%s\n", part.title)
		tw = tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
		head := "parameter\t"
		for _, s := range sources {
			head += s.Name + "\t"
		}
		fmt.Fprintln(tw, head)
		for k, name := range rep.Names {
			line := name + "\t"
			for _, s := range sources {
				v := math.NaN()
				if s.Bias != nil {
					v = part.get(s, k)
				}
				line += sci(v) + "\t"
			}
			fmt.Fprintln(tw, line)
		}
		tw.Flush()
	}

	fmt.Fprintln(w, "\n4. share of each method's MSE that is sampling noise (true-process MSE / method MSE)")
	tw = tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	head = "parameter\t"
	for _, m := range rep.Methods {
		head += m.Name + "\t"
	}
	fmt.Fprintln(tw, head)
	for k, name := range rep.Names {
		line := name + "\t"
		for _, m := range rep.Methods {
			v := math.NaN()
			if m.MSE != nil && rep.Floor.MSE != nil {
				v = rep.Floor.MSE[k] / m.MSE[k]
			}
			line += fmt.Sprintf("%.2f\t", v)
		}
		fmt.Fprintln(tw, line)
	}
	tw.Flush()
	for _, s := range sources {
		if s.Failed > 0 {
			fmt.Fprintf(w, "\nnote: %s: %d of %d samples never moved in every direction (singular regressors) and are left out of bias and MSE\n", s.Name, s.Failed, cfg.Reps)
		}
	}
	return nil
}
