package main

import (
	"math"

	"github.com/spf13/pflag"

	"gridstage/solver"
)

// shockFlags describe a univariate law on the command line: its family and
// the parameters each family takes.
type shockFlags struct {
	family               string
	mu, sigma            float64 // normal, lognormal
	alpha, beta, lo, hi  float64 // beta
	nu, loc, scale       float64 // t, laplace
	mixWeights, mixMeans []float64
	mixSDs               []float64
}

func (s *shockFlags) register(fs *pflag.FlagSet, familyFlag, familyDefault, familyHelp string) {
	fs.StringVar(&s.family, familyFlag, familyDefault, familyHelp)
	fs.Float64Var(&s.nu, "nu", 5, "degrees of freedom of the Student t law")
	fs.Float64SliceVar(&s.mixWeights, "mix-weights", nil, "mixture: component probabilities, comma-separated, summing to 1")
	fs.Float64SliceVar(&s.mixMeans, "mix-means", nil, "mixture: component means")
	fs.Float64SliceVar(&s.mixSDs, "mix-sds", nil, "mixture: component standard deviations")
}

// mixture validates the mixture flags and returns the law.
func (s *shockFlags) mixture() (solver.Mixture, error) {
	k := len(s.mixWeights)
	if k == 0 {
		return solver.Mixture{}, badInput("--mix-weights is required for a mixture: give component probabilities such as 0.9,0.1")
	}
	if len(s.mixMeans) != k || len(s.mixSDs) != k {
		return solver.Mixture{}, badInput("--mix-means and --mix-sds need %d values each, one per entry of --mix-weights", k)
	}
	var total float64
	for i, w := range s.mixWeights {
		if !(w > 0) || w > 1 {
			return solver.Mixture{}, badInput("--mix-weights entry %d = %g is out of range: want a probability in (0, 1]", i+1, w)
		}
		if !(s.mixSDs[i] > 0) || math.IsInf(s.mixSDs[i], 1) {
			return solver.Mixture{}, badInput("--mix-sds entry %d = %g is out of range: want a finite number > 0", i+1, s.mixSDs[i])
		}
		if math.IsNaN(s.mixMeans[i]) || math.IsInf(s.mixMeans[i], 0) {
			return solver.Mixture{}, badInput("--mix-means entry %d = %g is out of range: want a finite number", i+1, s.mixMeans[i])
		}
		total += w
	}
	if math.Abs(total-1) > 1e-9 {
		return solver.Mixture{}, badInput("--mix-weights sum to %g: want 1", total)
	}
	return solver.Mixture{Weights: s.mixWeights, Means: s.mixMeans, SDs: s.mixSDs}, nil
}

// studentT validates ν.
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

// components lists the mixture flags as manifest components.
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
		return map[string]any{"law": "normal", "mean": s.mu, "sd": s.sigma}
	case "lognormal":
		return map[string]any{"law": "lognormal", "log_mean": s.mu, "log_sd": s.sigma}
	case "beta":
		return map[string]any{"law": "beta", "alpha": s.alpha, "beta": s.beta, "lower": s.lo, "upper": s.hi}
	case "mixture":
		return map[string]any{"law": "mixture", "components": s.components()}
	case "t":
		return map[string]any{"law": "t", "nu": s.nu, "location": s.loc, "scale": s.scale}
	}
	return map[string]any{"law": "laplace", "location": s.loc, "scale": s.scale}
}
