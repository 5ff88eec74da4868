// Package modelstage is the reference downstream stage: it solves the models
// of package models on every chain it is handed and returns estimates that
// carry the chain hash of the chain used.
//
// Models and their parameters (request params, by name):
//
//	burnside      beta, theta                         Burnside (1998) price-dividend ratio
//	burnside-slope beta, theta [mean, rho, sigma]     its derivative in each process parameter, by
//	                                                  implicit differentiation of the pricing equation
//	                                                  with the chain's sensitivities; with the AR(1)'s
//	                                                  mean, rho and sigma, also the closed form's d/drho
//	brock-mirman  alpha, beta [capital_points, capital_low, capital_high]
//	                                                  Brock and Mirman (1972) growth by value-function iteration
//	savings       beta, gamma, rate [limit, asset_points, asset_max]
//	                                                  consumption-savings with a borrowing limit
package modelstage

import (
	"context"
	"errors"
	"fmt"
	"math"
	"slices"
	"sort"
	"strings"

	"gridstage/internal/version"
	"gridstage/models"
	"gridstage/plugin"
	"gridstage/solver"
)

// Name is the stage name recorded in the lineage ledger.
const Name = "gridstage-models"

// Stage solves models on chains. Loader reads chains by reference; when a
// request carries a chain's numbers inline, Verify (if set) checks them
// against the reference's chain hash instead.
type Stage struct {
	Loader plugin.ChainLoader
	Verify func(ref plugin.ChainRef, data *plugin.ChainData) error
}

var _ plugin.Stage = (*Stage)(nil)

// Models lists the models Estimate accepts.
var Models = []string{"burnside", "burnside-slope", "brock-mirman", "savings"}

// Describe names the stage.
func (s *Stage) Describe(context.Context) (plugin.Description, error) {
	return plugin.Description{
		Name:             Name,
		Version:          version.Tool,
		ProtocolVersions: plugin.ProtocolVersions,
		Capabilities:     []string{plugin.CapEstimate, plugin.CapSensitivities},
		Models:           Models,
	}, nil
}

// Health reports ready when the stage can read chains.
func (s *Stage) Health(context.Context) error {
	if s.Loader == nil {
		return errors.New("no chain reader configured")
	}
	return nil
}

// Discretize is not offered by this stage.
func (s *Stage) Discretize(context.Context, plugin.DiscretizeRequest) (*plugin.Discretization, error) {
	return nil, plugin.ErrUnsupported
}

// Estimate solves req.Model on each chain, one estimate per chain.
func (s *Stage) Estimate(ctx context.Context, req plugin.EstimateRequest) ([]plugin.Estimate, error) {
	solve, err := solverFor(req.Model, req.Params)
	if err != nil {
		return nil, err
	}
	if len(req.Chains) == 0 {
		return nil, plugin.BadRequest("model %s: no chains given", req.Model)
	}
	var out []plugin.Estimate
	for _, in := range req.Chains {
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		data, err := s.chain(ctx, in)
		if err != nil {
			return nil, err
		}
		c, err := univariate(in.Ref, data)
		if err != nil {
			return nil, err
		}
		e, err := solve(c, data.Sensitivities)
		if err != nil {
			return nil, fmt.Errorf("model %s on chain %s (%s point %d): %w", req.Model, in.Ref.ChainHash, in.Ref.Process, in.Ref.Point, err)
		}
		e.Model = req.Model
		e.ChainHashes = []string{in.Ref.ChainHash}
		out = append(out, e)
	}
	return out, nil
}

// chain returns the chain's numbers, verified against the reference.
func (s *Stage) chain(ctx context.Context, in plugin.ChainInput) (*plugin.ChainData, error) {
	if in.Data != nil {
		if s.Verify == nil {
			return nil, fmt.Errorf("chain %s came inline but this stage cannot verify inline chains", in.Ref.ChainHash)
		}
		if err := s.Verify(in.Ref, in.Data); err != nil {
			return nil, err
		}
		return in.Data, nil
	}
	if s.Loader == nil {
		return nil, errors.New("no chain reader configured")
	}
	return s.Loader.Load(ctx, in.Ref)
}

// univariate converts a one-dimensional chain for the models package.
func univariate(ref plugin.ChainRef, d *plugin.ChainData) (models.Chain, error) {
	if d.Dim != 1 {
		return models.Chain{}, plugin.BadRequest("chain %s (%s point %d) has %d dimensions; these models need a univariate chain", ref.ChainHash, ref.Process, ref.Point, d.Dim)
	}
	c := models.Chain{Levels: d.Grid, Transition: d.Transition}
	if err := c.Validate(); err != nil {
		return models.Chain{}, fmt.Errorf("chain %s: %w", ref.ChainHash, err)
	}
	return c, nil
}

// params reads model parameters, rejecting unknown names and missing
// required ones.
type params struct {
	model string
	m     map[string]float64
	used  map[string]bool
	err   error
}

func (p *params) required(name string) float64 {
	p.used[name] = true
	v, ok := p.m[name]
	if !ok && p.err == nil {
		p.err = plugin.BadRequest("model %s needs parameter %s", p.model, name)
	}
	return v
}

func (p *params) optional(name string, def float64) float64 {
	p.used[name] = true
	if v, ok := p.m[name]; ok {
		return v
	}
	return def
}

func (p *params) integer(name string) int {
	v := p.optional(name, 0)
	if v != math.Trunc(v) && p.err == nil {
		p.err = plugin.BadRequest("model %s: parameter %s = %g must be a whole number", p.model, name, v)
	}
	return int(v)
}

// done reports the first problem: a missing parameter or an unknown one.
func (p *params) done() error {
	if p.err != nil {
		return p.err
	}
	var unknown []string
	for k := range p.m {
		if !p.used[k] {
			unknown = append(unknown, k)
		}
	}
	if len(unknown) > 0 {
		sort.Strings(unknown)
		known := make([]string, 0, len(p.used))
		for k := range p.used {
			known = append(known, k)
		}
		sort.Strings(known)
		return plugin.BadRequest("model %s does not take parameter %s (it takes %s)", p.model, strings.Join(unknown, ", "), strings.Join(known, ", "))
	}
	return nil
}

// paramError turns a models.ParamError into a bad request.
func paramError(model string, err error) error {
	var pe *models.ParamError
	if errors.As(err, &pe) {
		return plugin.BadRequest("model %s: parameter %s = %g is out of range: want %s", model, pe.Param, pe.Value, pe.Want)
	}
	return err
}

// solverFor validates the parameters of a model and returns its solver.
func solverFor(model string, m map[string]float64) (func(models.Chain, []plugin.Sensitivity) (plugin.Estimate, error), error) {
	p := &params{model: model, m: m, used: map[string]bool{}}
	var solve func(models.Chain, []plugin.Sensitivity) (plugin.Estimate, error)
	switch model {
	case "burnside":
		b := models.Burnside{Beta: p.required("beta"), Theta: p.required("theta")}
		if err := p.done(); err != nil {
			return nil, err
		}
		if err := b.Validate(); err != nil {
			return nil, paramError(model, err)
		}
		solve = func(c models.Chain, _ []plugin.Sensitivity) (plugin.Estimate, error) { return burnside(b, c) }
	case "burnside-slope":
		b := models.Burnside{Beta: p.required("beta"), Theta: p.required("theta")}
		var ar *[3]float64
		if _, has := m["rho"]; has || m["mean"] != 0 || m["sigma"] != 0 {
			ar = &[3]float64{p.required("mean"), p.required("rho"), p.required("sigma")}
		}
		if err := p.done(); err != nil {
			return nil, err
		}
		if err := b.Validate(); err != nil {
			return nil, paramError(model, err)
		}
		solve = func(c models.Chain, s []plugin.Sensitivity) (plugin.Estimate, error) {
			return burnsideSlope(b, ar, c, s)
		}
	case "brock-mirman":
		b := models.BrockMirman{Alpha: p.required("alpha"), Beta: p.required("beta"), Capital: p.integer("capital_points"),
			Low: p.optional("capital_low", 0), High: p.optional("capital_high", 0)}
		if err := p.done(); err != nil {
			return nil, err
		}
		if err := b.Validate(); err != nil {
			return nil, paramError(model, err)
		}
		solve = func(c models.Chain, _ []plugin.Sensitivity) (plugin.Estimate, error) { return brockMirman(b, c) }
	case "savings":
		sv := models.Savings{Beta: p.required("beta"), Gamma: p.required("gamma"), Rate: p.required("rate"),
			Limit: p.optional("limit", 0), Assets: p.integer("asset_points"), AssetMax: p.optional("asset_max", 0)}
		if err := p.done(); err != nil {
			return nil, err
		}
		if err := sv.Validate(); err != nil {
			return nil, paramError(model, err)
		}
		solve = func(c models.Chain, _ []plugin.Sensitivity) (plugin.Estimate, error) { return savings(sv, c) }
	default:
		return nil, plugin.BadRequest("unknown model %q: this stage solves %s", model, strings.Join(Models, ", "))
	}
	return func(c models.Chain, s []plugin.Sensitivity) (plugin.Estimate, error) {
		e, err := solve(c, s)
		return e, paramError(model, err)
	}, nil
}

func burnside(m models.Burnside, c models.Chain) (plugin.Estimate, error) {
	v, err := m.PriceDividend(c)
	if err != nil {
		return plugin.Estimate{}, err
	}
	pi, err := solver.Stationary(c.Transition, c.N())
	if err != nil {
		return plugin.Estimate{}, err
	}
	var mean, meanLevel float64
	for i, p := range pi {
		mean += p * v[i]
		meanLevel += p * c.Levels[i]
	}
	return plugin.Estimate{
		Scalars: map[string]float64{
			"price_dividend_mean":    mean,
			"price_dividend_at_mean": interpolate(c.Levels, v, meanLevel),
			"stationary_mean_growth": meanLevel,
		},
		Vectors: map[string][]float64{"levels": c.Levels, "price_dividend": v},
	}, nil
}

func brockMirman(m models.BrockMirman, c models.Chain) (plugin.Estimate, error) {
	g, err := m.Solve(c)
	if err != nil {
		return plugin.Estimate{}, err
	}
	// Report the distance to the closed form so that a reader can check
	// the solution without rerunning it.
	var gap float64
	nk := len(g.Capital)
	for s, x := range c.Levels {
		for i, k := range g.Capital {
			want := m.Alpha * m.Beta * math.Exp(x) * math.Pow(k, m.Alpha)
			gap = math.Max(gap, math.Abs(g.Policy[s*nk+i]-want))
		}
	}
	return plugin.Estimate{
		Scalars: map[string]float64{
			"capital_spacing":        g.Spacing(),
			"policy_gap_closed_form": gap,
			"iterations":             float64(g.Iterations),
		},
		Vectors: map[string][]float64{"levels": c.Levels, "capital": g.Capital, "policy": g.Policy, "value": g.Value},
	}, nil
}

func savings(m models.Savings, c models.Chain) (plugin.Estimate, error) {
	w, err := m.Solve(c)
	if err != nil {
		return plugin.Estimate{}, err
	}
	return plugin.Estimate{
		Scalars: map[string]float64{
			"wealth_mean":    w.Moments.Mean,
			"wealth_sd":      w.Moments.SD,
			"wealth_median":  w.Moments.Median,
			"share_at_limit": w.Moments.AtLimit,
			"iterations":     float64(w.Iterations),
		},
		Vectors: map[string][]float64{"levels": c.Levels, "assets": w.Assets, "income": w.Income,
			"consumption": w.Consumption, "saving": w.Saving},
	}, nil
}

// interpolate evaluates at x the piecewise-linear function through the
// points (xs[i], ys[i]), sorted by x, clamped at the ends.
func interpolate(xs, ys []float64, x float64) float64 {
	idx := make([]int, len(xs))
	for i := range idx {
		idx[i] = i
	}
	slices.SortFunc(idx, func(a, b int) int { return cmpFloat(xs[a], xs[b]) })
	if x <= xs[idx[0]] {
		return ys[idx[0]]
	}
	for k := 1; k < len(idx); k++ {
		a, b := idx[k-1], idx[k]
		if x <= xs[b] {
			if xs[b] == xs[a] {
				return ys[b]
			}
			t := (x - xs[a]) / (xs[b] - xs[a])
			return ys[a] + t*(ys[b]-ys[a])
		}
	}
	return ys[idx[len(idx)-1]]
}

func cmpFloat(a, b float64) int {
	switch {
	case a < b:
		return -1
	case a > b:
		return 1
	}
	return 0
}
