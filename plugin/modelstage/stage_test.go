package modelstage

import (
	"context"
	"errors"
	"math"
	"strings"
	"testing"

	"gridstage/plugin"
	"gridstage/solver"
)

// memLoader serves chains from memory by chain hash.
type memLoader map[string]*plugin.ChainData

func (m memLoader) Load(_ context.Context, ref plugin.ChainRef) (*plugin.ChainData, error) {
	d, ok := m[ref.ChainHash]
	if !ok {
		return nil, plugin.MismatchHash("chain hash", ref.Path, ref.ChainHash, "nothing")
	}
	return d, nil
}

func ar1Chain(t *testing.T, p solver.AR1, s solver.Settings) *plugin.ChainData {
	t.Helper()
	c, err := p.Discretize(s)
	if err != nil {
		t.Fatal(err)
	}
	return &plugin.ChainData{Dim: 1, Grid: c.Grid, Transition: c.Transition, Matched: c.Matched}
}

func TestEstimateModels(t *testing.T) {
	div := ar1Chain(t, solver.AR1{Mean: 0.0179, Rho: -0.139, Sigma: 0.0348}, solver.Settings{States: 9})
	tfp := ar1Chain(t, solver.AR1{Rho: 0.9, Sigma: 0.05}, solver.Settings{States: 5})
	st := &Stage{Loader: memLoader{"div": div, "tfp": tfp}}
	ctx := context.Background()
	ref := func(h string) []plugin.ChainInput {
		return []plugin.ChainInput{{Ref: plugin.ChainRef{ChainHash: h, Process: h}}}
	}

	es, err := st.Estimate(ctx, plugin.EstimateRequest{Model: "burnside", Params: map[string]float64{"beta": 0.95, "theta": -1.5}, Chains: ref("div")})
	if err != nil {
		t.Fatal(err)
	}
	// Burnside (1998) closed form at the mean, 12.4812365818 (REFERENCES.md,
	// [derived]); the 9-state maxent chain is within 1e-9 relative of it
	// (docs/ACCURACY.md), and the mean state is the middle grid point.
	if got := es[0].Scalars["price_dividend_at_mean"]; math.Abs(got/12.4812365818-1) > 1e-9 {
		t.Errorf("price-dividend at the mean = %.10f", got)
	}
	if es[0].ChainHashes[0] != "div" || es[0].Model != "burnside" {
		t.Errorf("estimate lineage %v %s", es[0].ChainHashes, es[0].Model)
	}

	es, err = st.Estimate(ctx, plugin.EstimateRequest{Model: "brock-mirman", Params: map[string]float64{"alpha": 0.36, "beta": 0.96, "capital_points": 201}, Chains: ref("tfp")})
	if err != nil {
		t.Fatal(err)
	}
	// Closed-form policy (Brock and Mirman 1972) to one grid spacing.
	if gap, h := es[0].Scalars["policy_gap_closed_form"], es[0].Scalars["capital_spacing"]; gap > h {
		t.Errorf("policy gap %g exceeds the grid spacing %g", gap, h)
	}
	if n := len(es[0].Vectors["policy"]); n != 5*201 {
		t.Errorf("policy has %d entries, want 1005", n)
	}

	es, err = st.Estimate(ctx, plugin.EstimateRequest{Model: "savings", Params: map[string]float64{"beta": 0.95, "gamma": 2, "rate": 0.03}, Chains: ref("tfp")})
	if err != nil {
		t.Fatal(err)
	}
	if m := es[0].Scalars["wealth_mean"]; !(m > 0) {
		t.Errorf("mean wealth %g", m)
	}
}

func TestEstimateBadRequests(t *testing.T) {
	st := &Stage{Loader: memLoader{"v": {Dim: 2, Grid: []float64{0, 0, 1, 1}, Transition: []float64{1, 0, 0, 1}}}}
	in := []plugin.ChainInput{{Ref: plugin.ChainRef{ChainHash: "v"}}}
	cases := []struct {
		req  plugin.EstimateRequest
		want string
	}{
		{plugin.EstimateRequest{Model: "lucas", Chains: in}, `unknown model "lucas": this stage solves burnside, burnside-slope, brock-mirman, savings`},
		{plugin.EstimateRequest{Model: "burnside", Params: map[string]float64{"beta": 0.9}, Chains: in}, "model burnside needs parameter theta"},
		{plugin.EstimateRequest{Model: "burnside", Params: map[string]float64{"beta": 0.9, "theta": 1, "gamma": 2}, Chains: in}, "model burnside does not take parameter gamma (it takes beta, theta)"},
		{plugin.EstimateRequest{Model: "burnside", Params: map[string]float64{"beta": 1.2, "theta": 1}, Chains: in}, "model burnside: parameter beta = 1.2 is out of range: want in (0, 1)"},
		{plugin.EstimateRequest{Model: "burnside", Params: map[string]float64{"beta": 0.9, "theta": 1}, Chains: in}, "has 2 dimensions; these models need a univariate chain"},
		{plugin.EstimateRequest{Model: "savings", Params: map[string]float64{"beta": 0.9, "gamma": 1, "rate": 0, "asset_points": 10.5}, Chains: in}, "asset_points = 10.5 must be a whole number"},
	}
	for _, tc := range cases {
		_, err := st.Estimate(context.Background(), tc.req)
		if !errors.Is(err, plugin.ErrBadRequest) || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: err = %v, want a bad request containing %q", tc.req.Model, err, tc.want)
		}
	}
}

func TestEstimateVerifiesInlineChains(t *testing.T) {
	data := &plugin.ChainData{Dim: 1, Grid: []float64{0}, Transition: []float64{1}}
	st := &Stage{Verify: func(ref plugin.ChainRef, d *plugin.ChainData) error {
		return plugin.MismatchHash("chain hash", "inline", ref.ChainHash, "0123")
	}}
	_, err := st.Estimate(context.Background(), plugin.EstimateRequest{Model: "burnside", Params: map[string]float64{"beta": 0.9, "theta": -1},
		Chains: []plugin.ChainInput{{Ref: plugin.ChainRef{ChainHash: "abcd"}, Data: data}}})
	if !errors.Is(err, plugin.ErrChainMismatch) {
		t.Errorf("err = %v, want ErrChainMismatch", err)
	}
}
