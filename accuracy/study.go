package accuracy

import (
	"errors"
	"fmt"
	"math/rand/v2"
	"runtime"
	"sync"

	"gridstage/solver"
)

// Candidate is one chain in a study, with a label such as its method name.
type Candidate struct {
	Name  string
	Chain *solver.Chain
}

// Config sets the simulation of a study.
type Config struct {
	// Reps is the number of replications (samples) per chain, ≥ 1.
	Reps int `json:"replications"`
	// Length is the number of observations per sample, ≥ d + 3.
	Length int `json:"length"`
	// Seed seeds the PCG generator; replication r of every chain uses the
	// stream (Seed, r), so chains are compared on common random numbers.
	Seed uint64 `json:"seed"`
	// Workers bounds the goroutines; 0 means GOMAXPROCS. Results do not
	// depend on it.
	Workers int `json:"-"`
}

// Result reports one source of samples (a chain, or the true VAR).
type Result struct {
	Name      string `json:"name"`
	States    int    `json:"states,omitempty"`
	Fallbacks int    `json:"fallback_states"`
	// Population is the VAR implied by the chain's stationary distribution
	// (the truth itself for the true VAR); PopulationErr its error per
	// parameter, and PopCoefErr, PopCovErr the summaries of Errors.
	Population    Estimate  `json:"population"`
	PopulationErr []float64 `json:"population_error"`
	PopCoefErr    float64   `json:"population_coef_error"`
	PopCovErr     float64   `json:"population_cov_error"`
	// Bias and MSE are the mean and mean square of the OLS estimate minus
	// the truth over the replications that could be estimated (nil when
	// none could).
	Bias []float64 `json:"bias"`
	MSE  []float64 `json:"mse"`
	// Failed counts replications whose sample did not move in every
	// direction (singular regressors); they are left out of Bias and MSE.
	Failed int `json:"failed_replications"`
}

// Report is the outcome of a study.
type Report struct {
	Truth  Estimate `json:"truth"`
	Names  []string `json:"parameters"`
	Config Config   `json:"config"`
	// Methods holds one Result per candidate, in order.
	Methods []Result `json:"methods"`
	// Floor is OLS on samples from the true VAR: the sampling noise that
	// no discretization can remove.
	Floor Result `json:"true_process"`
}

// Run carries out the study for the VAR truth (a valid process; an AR(1)
// is the case d = 1) and the candidate chains, which must have the VAR's
// dimension.
func Run(truth solver.VAR, cands []Candidate, cfg Config) (Report, error) {
	d := truth.Dim()
	if err := truth.Validate(); err != nil {
		return Report{}, err
	}
	if cfg.Reps < 1 {
		return Report{}, fmt.Errorf("accuracy: replications = %d: want at least 1", cfg.Reps)
	}
	if cfg.Length < d+3 {
		return Report{}, fmt.Errorf("accuracy: sample length = %d: want at least %d for a %d-dimensional VAR", cfg.Length, d+3, d)
	}
	te := FromVAR(truth)
	rep := Report{Truth: te, Names: ParamNames(d), Config: cfg}
	rep.Floor = Result{Name: "true process", Population: te, PopulationErr: make([]float64, len(te.Params()))}
	floor := NewVARSampler(truth)
	rep.Floor.Bias, rep.Floor.MSE, rep.Floor.Failed = simulate(floor.Path, d, te, cfg)
	for _, c := range cands {
		if c.Chain.Dim != d {
			return Report{}, fmt.Errorf("accuracy: chain %q has dimension %d, the process %d", c.Name, c.Chain.Dim, d)
		}
		r := Result{Name: c.Name, States: c.Chain.States(), Fallbacks: c.Chain.Fallbacks()}
		pi, err := solver.Stationary(c.Chain.Transition, c.Chain.States())
		if err != nil {
			return Report{}, fmt.Errorf("accuracy: chain %q: %w", c.Name, err)
		}
		r.Population, err = Population(c.Chain, pi)
		if err != nil {
			return Report{}, fmt.Errorf("accuracy: chain %q: %w", c.Name, err)
		}
		r.PopulationErr = diff(r.Population.Params(), te.Params())
		r.PopCoefErr, r.PopCovErr = Errors(r.Population, te)
		s := NewSampler(c.Chain, pi)
		r.Bias, r.MSE, r.Failed = simulate(s.Path, d, te, cfg)
		rep.Methods = append(rep.Methods, r)
	}
	return rep, nil
}

func diff(a, b []float64) []float64 {
	out := make([]float64, len(a))
	for i := range a {
		out[i] = a[i] - b[i]
	}
	return out
}

// simulate runs cfg.Reps replications of path → OLS and returns the bias
// and mean squared error of each parameter and the number of failed
// replications. Replication r draws from the PCG stream (Seed, r); the
// results are collected by index, so they do not depend on the number of
// workers.
func simulate(path func(*rand.Rand, []float64), d int, truth Estimate, cfg Config) (bias, mse []float64, failed int) {
	want := truth.Params()
	ests := make([][]float64, cfg.Reps)
	workers := cfg.Workers
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	var wg sync.WaitGroup
	next := make(chan int)
	for w := 0; w < workers; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			buf := make([]float64, cfg.Length*d)
			for r := range next {
				path(rand.New(rand.NewPCG(cfg.Seed, uint64(r))), buf)
				e, err := OLS(buf, d)
				if err == nil {
					ests[r] = e.Params()
				} else if !errors.Is(err, ErrSingular) {
					panic(err) // lengths were validated by Run
				}
			}
		}()
	}
	for r := 0; r < cfg.Reps; r++ {
		next <- r
	}
	close(next)
	wg.Wait()
	bias, mse = make([]float64, len(want)), make([]float64, len(want))
	ok := 0
	for _, e := range ests {
		if e == nil {
			failed++
			continue
		}
		ok++
		for k := range want {
			dev := e[k] - want[k]
			bias[k] += dev
			mse[k] += dev * dev
		}
	}
	if ok == 0 {
		return nil, nil, failed
	}
	for k := range want {
		bias[k] /= float64(ok)
		mse[k] /= float64(ok)
	}
	return bias, mse, failed
}
