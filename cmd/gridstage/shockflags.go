package main

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"github.com/spf13/pflag"

	"gridstage/solver"
)

// shockFlags describe a univariate law on the command line: its family and
// the parameters each family takes. Flags carry the names of the manifest
// keys they stand for (log_mean is --log-mean), so that one set of names
// serves both.
type shockFlags struct {
	family               string
	mean, sd             float64   // normal
	logMean, logSD       float64   // lognormal
	alpha, beta          float64   // beta
	lower, upper         float64   // beta
	nu, location, scale  float64   // t, laplace
	componentFlags       []string  // --component, one per component
	mixWeights, mixMeans []float64 // parsed from components
	mixSDs               []float64
}

func (s *shockFlags) register(fs *pflag.FlagSet, familyFlag, familyDefault, familyHelp string) {
	fs.StringVar(&s.family, familyFlag, familyDefault, familyHelp)
	fs.Float64Var(&s.nu, "nu", 5, "t: degrees of freedom")
	fs.StringArrayVar(&s.componentFlags, "component", nil, "mixture: one normal component as weight=W,mean=M,sd=S; repeat the flag for each component (weights sum to 1)")
}

// mixture validates the --component flags and returns the law.
func (s *shockFlags) mixture() (solver.Mixture, error) {
	if len(s.componentFlags) == 0 {
		return solver.Mixture{}, badInput("--component is required for a mixture: give each component as weight=W,mean=M,sd=S, such as --component weight=0.9,mean=0,sd=1 --component weight=0.1,mean=-1,sd=2")
	}
	s.mixWeights, s.mixMeans, s.mixSDs = nil, nil, nil
	var total float64
	for i, text := range s.componentFlags {
		c, err := parseComponent(text)
		if err != nil {
			return solver.Mixture{}, badInput("--component %d (%q): %v", i+1, text, err)
		}
		w, m, sd := c["weight"], c["mean"], c["sd"]
		if !(w > 0) || w > 1 {
			return solver.Mixture{}, badInput("--component %d: weight %g is out of range: want a probability in (0, 1]", i+1, w)
		}
		if !(sd > 0) || math.IsInf(sd, 1) {
			return solver.Mixture{}, badInput("--component %d: sd %g is out of range: want a finite number > 0", i+1, sd)
		}
		if math.IsNaN(m) || math.IsInf(m, 0) {
			return solver.Mixture{}, badInput("--component %d: mean %g is out of range: want a finite number", i+1, m)
		}
		s.mixWeights = append(s.mixWeights, w)
		s.mixMeans = append(s.mixMeans, m)
		s.mixSDs = append(s.mixSDs, sd)
		total += w
	}
	if math.Abs(total-1) > 1e-9 {
		return solver.Mixture{}, badInput("--component weights sum to %g: want 1", total)
	}
	return solver.Mixture{Weights: s.mixWeights, Means: s.mixMeans, SDs: s.mixSDs}, nil
}

// parseComponent reads "weight=W,mean=M,sd=S" (keys in any order, each
// exactly once), the command-line form of one entry of a manifest's
// components list.
func parseComponent(text string) (map[string]float64, error) {
	out := map[string]float64{}
	for _, part := range strings.Split(text, ",") {
		key, val, ok := strings.Cut(strings.TrimSpace(part), "=")
		if !ok {
			return nil, fmt.Errorf("%q is not key=value: want weight=W,mean=M,sd=S", part)
		}
		key = strings.TrimSpace(key)
		if key != "weight" && key != "mean" && key != "sd" {
			return nil, fmt.Errorf("unknown key %q: want weight, mean and sd", key)
		}
		if _, dup := out[key]; dup {
			return nil, fmt.Errorf("%s given twice", key)
		}
		v, err := strconv.ParseFloat(strings.TrimSpace(val), 64)
		if err != nil {
			return nil, fmt.Errorf("%s=%q is not a number", key, val)
		}
		out[key] = v
	}
	for _, key := range []string{"weight", "mean", "sd"} {
		if _, ok := out[key]; !ok {
			return nil, fmt.Errorf("%s is missing: want weight=W,mean=M,sd=S", key)
		}
	}
	return out, nil
}

// checkNu validates ν > min.
func (s *shockFlags) checkNu(min float64) error {
	if !(s.nu > min) || math.IsInf(s.nu, 1) {
		return badInput("--nu %g is out of range: want a finite number > %g", s.nu, min)
	}
	return nil
}

// finite checks a float flag is a finite number.
func finite(flag string, v float64) error {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return badInput("--%s %g is out of range: want a finite number", flag, v)
	}
	return nil
}

// positive checks a float flag is finite and > 0.
func positive(flag string, v float64) error {
	if !(v > 0) || math.IsInf(v, 1) {
		return badInput("--%s %g is out of range: want a finite number > 0", flag, v)
	}
	return nil
}

// components lists the --component flags as manifest components (valid
// after mixture succeeded).
func (s *shockFlags) components() []map[string]any {
	out := make([]map[string]any, len(s.mixWeights))
	for i := range out {
		out[i] = map[string]any{"weight": s.mixWeights[i], "mean": s.mixMeans[i], "sd": s.mixSDs[i]}
	}
	return out
}

// law returns the innovation flags as a manifest innovation law.
func (s *shockFlags) law() map[string]any {
	switch s.family {
	case "t":
		return map[string]any{"law": "t", "nu": s.nu}
	case "mixture":
		return map[string]any{"law": "mixture", "components": s.components()}
	}
	return map[string]any{"law": s.family}
}

// distributionLaw returns the distribution flags of `discretize iid` as a
// manifest distribution.
func (s *shockFlags) distributionLaw() map[string]any {
	switch s.family {
	case "normal":
		return map[string]any{"law": "normal", "mean": s.mean, "sd": s.sd}
	case "lognormal":
		return map[string]any{"law": "lognormal", "log_mean": s.logMean, "log_sd": s.logSD}
	case "beta":
		return map[string]any{"law": "beta", "alpha": s.alpha, "beta": s.beta, "lower": s.lower, "upper": s.upper}
	case "mixture":
		return map[string]any{"law": "mixture", "components": s.components()}
	case "t":
		return map[string]any{"law": "t", "nu": s.nu, "location": s.location, "scale": s.scale}
	}
	return map[string]any{"law": "laplace", "location": s.location, "scale": s.scale}
}
