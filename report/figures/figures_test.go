package figures

import (
	"fmt"
	"math"
	"reflect"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"gridstage/solver"
)

// binomial returns C(n, k).
func binomial(n, k int) float64 {
	r := 1.0
	for i := 1; i <= k; i++ {
		r = r * float64(n-k+i) / float64(i)
	}
	return r
}

// The Rouwenhorst chain's stationary distribution is Binomial(N−1, ½)
// (Kopecky and Suen 2010, Proposition 1), whatever ρ and σ; the bars of the
// mass figure must be exactly that.
func TestMassBarsAreRouwenhorstBinomial(t *testing.T) {
	for _, n := range []int{2, 5, 11} {
		c, err := wageShock.Discretize(solver.Settings{States: n, Method: solver.Rouwenhorst})
		if err != nil {
			t.Fatal(err)
		}
		m, err := MassOf(Case{Chain: c})
		if err != nil {
			t.Fatal(err)
		}
		for k, p := range m.Prob {
			want := binomial(n-1, k) / math.Pow(2, float64(n-1))
			// Tolerance 1e-13: the GTH elimination has no subtractions, so
			// the error is a few rounding errors per state.
			if !scalar.EqualWithinAbsOrRel(p, want, 1e-13, 1e-13) {
				t.Errorf("N=%d state %d: bar %.17g, want Binomial %.17g", n, k, p, want)
			}
		}
		if m.TrueProb != nil || !math.IsNaN(m.TotalVariation) {
			t.Errorf("N=%d: no law given, yet an overlay was computed", n)
		}
	}
}

// The overlay gives each grid cell the probability the true normal law puts
// on it; reference: scipy.stats.norm.cdf at the cell bounds.
func TestMassOverlayIsTrueCellProbability(t *testing.T) {
	c, err := wageShock.Discretize(solver.Settings{States: 5, Method: solver.Tauchen})
	if err != nil {
		t.Fatal(err)
	}
	sd := wageShock.StationarySD()
	m, err := MassOf(Case{Chain: c, Law: Law{Mean: 0, SD: sd, Gaussian: true}})
	if err != nil {
		t.Fatal(err)
	}
	// Tauchen's grid is even over ±3 s.d., so the cell bounds sit at
	// ±0.75 and ±2.25 s.d.
	var want []float64
	scipyEval(t, `
import json
from scipy.stats import norm
b = [-float('inf'), -2.25, -0.75, 0.75, 2.25, float('inf')]
print(json.dumps([norm.cdf(b[i+1]) - norm.cdf(b[i]) for i in range(5)]))`, &want)
	var sum float64
	for k := range want {
		// Tolerance 1e-15: erfc and scipy's ndtr agree to about one ulp;
		// the cell bounds are midpoints computed in floating point.
		if !scalar.EqualWithinAbsOrRel(m.TrueProb[k], want[k], 1e-15, 1e-13) {
			t.Errorf("cell %d: overlay %.17g, scipy %.17g", k, m.TrueProb[k], want[k])
		}
		sum += m.TrueProb[k]
		if !scalar.EqualWithinAbsOrRel(m.Hi[k]-m.Lo[k], 1.5*sd, 1e-12, 1e-12) && k > 0 && k < 4 {
			t.Errorf("cell %d: width %g, want 1.5 s.d. = %g", k, m.Hi[k]-m.Lo[k], 1.5*sd)
		}
	}
	if math.Abs(sum-1) > 1e-15 {
		t.Errorf("overlay sums to 1%+.3g over the cells, want 1 (they partition the line)", sum-1)
	}
	var tv float64
	for k := range m.Prob {
		tv += math.Abs(m.Prob[k]-want[k]) / 2
	}
	if math.Abs(tv-m.TotalVariation) > 1e-14 {
		t.Errorf("total variation %g, want %g", m.TotalVariation, tv)
	}
	if !m.Gaussian {
		t.Error("a Gaussian law was given; the overlay must say it is the exact law")
	}
}

// At each grid point of an even grid the curve is the normal density times
// the grid step: the density expressed as probability per cell.
func TestMassCurveIsDensityTimesCellWidth(t *testing.T) {
	c, err := wageShock.Discretize(solver.Settings{States: 5, Method: solver.Tauchen})
	if err != nil {
		t.Fatal(err)
	}
	sd := wageShock.StationarySD()
	m, err := MassOf(Case{Chain: c, Law: Law{SD: sd, Gaussian: true}})
	if err != nil {
		t.Fatal(err)
	}
	h := 1.5 * sd
	found := 0
	for k, x := range m.CurveX {
		for _, g := range m.Levels {
			if math.Abs(x-g) < 1e-12 {
				found++
				want := math.Exp(-x*x/(2*sd*sd)) / (sd * math.Sqrt(2*math.Pi)) * h
				// Closed form of the normal density; tolerance 1e-14 for
				// exp and the mesh position.
				if !scalar.EqualWithinAbsOrRel(m.CurveY[k], want, 1e-14, 1e-12) {
					t.Errorf("curve at %g: %g, want f(x)·h = %g", x, m.CurveY[k], want)
				}
			}
		}
	}
	if found != len(m.Levels) {
		t.Errorf("the mesh passes through %d of %d grid points", found, len(m.Levels))
	}
}

func TestMassSortsLevelsAndRejectsVectors(t *testing.T) {
	// A chain listed from high to low: the figure must still read left to
	// right, probabilities following their levels.
	c := &solver.Chain{Dim: 1, Grid: []float64{1, -1}, Transition: []float64{0.9, 0.1, 0.3, 0.7}, Matched: []int{0, 0}}
	m, err := MassOf(Case{Chain: c})
	if err != nil {
		t.Fatal(err)
	}
	// Stationary law of [[0.9, 0.1], [0.3, 0.7]]: π = (0.75, 0.25) by
	// detailed balance 0.1 π₀ = 0.3 π₁; tolerance a few ulps.
	if !reflect.DeepEqual(m.Levels, []float64{-1, 1}) || math.Abs(m.Prob[0]-0.25) > 1e-15 || math.Abs(m.Prob[1]-0.75) > 1e-15 {
		t.Errorf("levels %v prob %v, want [-1 1] [0.25 0.75]", m.Levels, m.Prob)
	}
	if _, err := MassOf(vectorCase(t)); err == nil {
		t.Error("a vector chain gave a univariate mass figure")
	}
}

// The heat map shows the transition matrix itself: Rouwenhorst with two
// states is [[p, 1−p], [1−p, p]] with p = (1+ρ)/2 (Rouwenhorst 1995).
func TestFlowIsTheTransitionMatrix(t *testing.T) {
	c, err := wageShock.Discretize(solver.Settings{States: 2, Method: solver.Rouwenhorst})
	if err != nil {
		t.Fatal(err)
	}
	f := FlowOf(Case{Chain: c})
	p := (1 + wageShock.Rho) / 2
	want := []float64{p, 1 - p, 1 - p, p}
	for k := range want {
		// Tolerance 1e-15: one multiplication and one subtraction.
		if math.Abs(f.P[k]-want[k]) > 1e-15 {
			t.Errorf("entry %d: %g, want %g", k, f.P[k], want[k])
		}
	}
	if f.States != 2 || f.Max != p {
		t.Errorf("states %d max %g, want 2 and %g", f.States, f.Max, p)
	}
	f.P[0] = -1
	if c.Transition[0] == -1 {
		t.Error("the figure data aliases the chain's transition matrix")
	}
}

func TestMomentErrorsArePlottedAsDiagnosed(t *testing.T) {
	// ρ = 0.9 with 9 states on an even grid: the two edge states cannot
	// carry four moments and fall back (the solver's own record).
	p := solver.AR1{Rho: 0.9, Sigma: 0.1}
	c, err := p.Discretize(solver.Settings{States: 9})
	if err != nil {
		t.Fatal(err)
	}
	b, err := p.Discretize(solver.Settings{States: 9, Method: solver.Rouwenhorst})
	if err != nil {
		t.Fatal(err)
	}
	d, bd := solver.Diagnose(c, p), solver.Diagnose(b, p)
	m, ok := MomentErrorsOf(Case{Chain: c, Diag: &d, BaselineDiag: &bd})
	if !ok || len(m.Series) != 2 {
		t.Fatalf("ok=%v with %d series, want two series", ok, len(m.Series))
	}
	s := m.Series[0]
	if s.Method != "maxent" || s.Requested != 4 || m.Series[1].Method != "rouwenhorst" {
		t.Errorf("series %s/%d and %s", s.Method, s.Requested, m.Series[1].Method)
	}
	for i, st := range d.States {
		got := [4]float64{s.Abs[0][i], s.Abs[1][i], s.Abs[2][i], s.Abs[3][i]}
		want := [4]float64{math.Abs(st.RelErr.Mean), math.Abs(st.RelErr.Var), math.Abs(st.RelErr.Skew), math.Abs(st.RelErr.Kurt)}
		if got != want {
			t.Errorf("state %d: plotted %v, diagnosed %v", i, got, want)
		}
		if s.X[i] != c.Grid[i] {
			t.Errorf("state %d plotted at %g, level %g", i, s.X[i], c.Grid[i])
		}
		if s.Fallback[i] != (c.Matched[i] < 4) {
			t.Errorf("state %d: fallback mark %v but matched %d of 4", i, s.Fallback[i], c.Matched[i])
		}
	}
	if s.Fallbacks() != c.Fallbacks() || s.Fallbacks() == 0 {
		t.Errorf("%d states marked, chain records %d fallbacks (want > 0 here)", s.Fallbacks(), c.Fallbacks())
	}
	// Rouwenhorst matches the conditional mean and variance exactly
	// (Kopecky and Suen 2010); tolerance 1e-12 for rounding in the
	// weighted sums.
	for i := range m.Series[1].X {
		if m.Series[1].Abs[0][i] > 1e-12 || m.Series[1].Abs[1][i] > 1e-12 {
			t.Errorf("rouwenhorst state %d: mean/variance errors %g, %g, want exact", i, m.Series[1].Abs[0][i], m.Series[1].Abs[1][i])
		}
	}
	if _, ok := MomentErrorsOf(Case{Chain: c}); ok {
		t.Error("errors figure without diagnostics")
	}
	// The caption names the marks and colours errorPanel draws, and the
	// fallback squares only when states fell back.
	caption := momentsFigure(Case{Chain: c}, m).Caption
	for _, want := range []string{"blue circles are the maxent chain", "orange triangles on a dashed line the rouwenhorst baseline",
		fmt.Sprintf("Vermilion squares mark the %d states", c.Fallbacks())} {
		if !strings.Contains(caption, want) {
			t.Errorf("caption lacks %q: %s", want, caption)
		}
	}
	m.Series = m.Series[1:]
	if caption := momentsFigure(Case{Chain: b}, m).Caption; strings.Contains(caption, "squares") || strings.Contains(caption, "triangles") || strings.Contains(caption, "red") {
		t.Errorf("caption of a chain alone with no fallback: %s", caption)
	}
}

// The vector case is a sheared product of Rouwenhorst chains, whose
// stationary covariance is exactly Σ = A diag(s₁², s₂²) Aᵀ; its principal
// axes are the eigenpairs of that 2×2 matrix, in closed form
//
//	λ = tr/2 ± √(tr²/4 − det).
func TestPlaneAxesAreStationaryCovarianceEigenpairs(t *testing.T) {
	c := vectorCase(t)
	pl, err := PlaneOf(c)
	if err != nil {
		t.Fatal(err)
	}
	cov := c.Law.Cov
	tr, det := cov[0]+cov[3], cov[0]*cov[3]-cov[1]*cov[2]
	disc := math.Sqrt(tr*tr/4 - det)
	want := [2]float64{tr/2 + disc, tr/2 - disc}
	for k, ax := range pl.Axes {
		// Tolerance 1e-12: eigenvalues of a well-separated 2×2 matrix.
		if !scalar.EqualWithinAbsOrRel(ax.SD*ax.SD, want[k], 1e-12, 1e-12) {
			t.Errorf("axis %d: variance %g, want %g", k, ax.SD*ax.SD, want[k])
		}
		// Σ d = λ d.
		sd := [2]float64{cov[0]*ax.Dir[0] + cov[1]*ax.Dir[1], cov[2]*ax.Dir[0] + cov[3]*ax.Dir[1]}
		if math.Abs(sd[0]-want[k]*ax.Dir[0]) > 1e-12 || math.Abs(sd[1]-want[k]*ax.Dir[1]) > 1e-12 {
			t.Errorf("axis %d: %v is not an eigenvector", k, ax.Dir)
		}
		if ax.Dir[0] < 0 {
			t.Errorf("axis %d: sign convention broken: %v", k, ax.Dir)
		}
		if tk := pl.TrueAxes[k]; math.Abs(tk.SD-ax.SD) > 1e-12 {
			t.Errorf("axis %d: true s.d. %g, chain %g (equal for Rouwenhorst)", k, tk.SD, ax.SD)
		}
	}
	if math.Abs(pl.Mean[0]) > 1e-15 || math.Abs(pl.Mean[1]) > 1e-15 {
		t.Errorf("mean %v, want the origin (symmetric grids)", pl.Mean)
	}
	var sum float64
	for _, p := range pl.Prob {
		sum += p
	}
	if math.Abs(sum-1) > 1e-13 || len(pl.X) != 25 {
		t.Errorf("%d states with mass %g, want 25 and 1", len(pl.X), sum)
	}
	if _, err := PlaneOf(gaussianCase(t, 5)); err == nil {
		t.Error("a univariate chain gave a plane figure")
	}
}

// lifeCycleCase has three ages of Rouwenhorst chains whose stationary s.d.
// grows with age. Binomial(N−1, ½) is invariant under every Rouwenhorst
// matrix (Kopecky and Suen 2010), so starting from it the mass at each age
// is Binomial again and the s.d. at age t is exactly that age's ψ_t/√(N−1)
// = the process's stationary s.d.
func lifeCycleCase(t *testing.T) (LifeCycle, []float64) {
	t.Helper()
	l := LifeCycle{Label: "earnings", Units: "log earnings", Ages: []float64{25, 35, 45}}
	var sds []float64
	for _, sigma := range []float64{0.05, 0.1, 0.2} {
		p := solver.AR1{Rho: 0.8, Sigma: sigma}
		c, err := p.Discretize(solver.Settings{States: 7, Method: solver.Rouwenhorst})
		if err != nil {
			t.Fatal(err)
		}
		l.Chains = append(l.Chains, c)
		sds = append(sds, p.StationarySD())
	}
	l.Initial = make([]float64, 7)
	for k := range l.Initial {
		l.Initial[k] = binomial(6, k) / 64
	}
	return l, sds
}

func TestAgeMassPushesTheInitialDistributionForward(t *testing.T) {
	l, sds := lifeCycleCase(t)
	am, err := AgeMassOf(l)
	if err != nil {
		t.Fatal(err)
	}
	if len(am.Prob) != 21 || len(am.Mean) != 3 || am.InitialAssumed {
		t.Fatalf("%d points, %d ages, assumed=%v", len(am.Prob), len(am.Mean), am.InitialAssumed)
	}
	for t2 := range l.Ages {
		for k := 0; k < 7; k++ {
			i := t2*7 + k
			// Tolerance 1e-14: a few products and sums of probabilities.
			if am.Age[i] != l.Ages[t2] || am.Level[i] != l.Chains[t2].Grid[k] || math.Abs(am.Prob[i]-binomial(6, k)/64) > 1e-14 {
				t.Errorf("age %g state %d: (%g, %g, %g)", l.Ages[t2], k, am.Age[i], am.Level[i], am.Prob[i])
			}
		}
		if math.Abs(am.Mean[t2]) > 1e-15 || !scalar.EqualWithinAbsOrRel(am.SD[t2], sds[t2], 1e-13, 1e-13) {
			t.Errorf("age %g: mean %g s.d. %g, want 0 and %g", l.Ages[t2], am.Mean[t2], am.SD[t2], sds[t2])
		}
	}
	l.Initial = nil
	am, err = AgeMassOf(l)
	if err != nil || !am.InitialAssumed {
		t.Errorf("without an initial distribution: err %v, assumed %v", err, am.InitialAssumed)
	}
	l.Ages = l.Ages[:2]
	if _, err := AgeMassOf(l); err == nil {
		t.Error("ages and chains of different lengths were accepted")
	}
}

// With a final grid the mass is pushed through the last matrix too: the
// last Rouwenhorst matrix keeps Binomial(6, ½), now on the final grid.
func TestAgeMassReachesTheFinalGrid(t *testing.T) {
	l, _ := lifeCycleCase(t)
	l.Final = []float64{-3, -2, -1, 0, 1, 2, 3}
	l.Ages = append(l.Ages, 55)
	am, err := AgeMassOf(l)
	if err != nil {
		t.Fatal(err)
	}
	if len(am.Mean) != 4 || len(am.Prob) != 28 {
		t.Fatalf("%d ages, %d points; want 4 and 28", len(am.Mean), len(am.Prob))
	}
	for k := 0; k < 7; k++ {
		i := 21 + k
		if am.Age[i] != 55 || am.Level[i] != l.Final[k] || math.Abs(am.Prob[i]-binomial(6, k)/64) > 1e-14 {
			t.Errorf("final age state %d: (%g, %g, %g)", k, am.Age[i], am.Level[i], am.Prob[i])
		}
	}
	// s.d. of Binomial(6, ½) on the grid −3…3: √(6/4) = 1.2247…; closed form.
	if math.Abs(am.SD[3]-math.Sqrt(1.5)) > 1e-14 {
		t.Errorf("final s.d. %g, want √1.5", am.SD[3])
	}
	if names := ForAge(gaussianCase(t, 5)); len(names) != 2 || names[0].Name != "flow" || names[1].Name != "errors" {
		t.Errorf("ForAge gave %d figures", len(names))
	}
}

func TestForChoosesFiguresByShape(t *testing.T) {
	names := func(c Case) string {
		figs, err := For(c)
		if err != nil {
			t.Fatal(err)
		}
		s := ""
		for _, f := range figs {
			s += f.Name + " "
		}
		return s
	}
	if got := names(gaussianCase(t, 9)); got != "mass flow errors " {
		t.Errorf("univariate with diagnostics: %q", got)
	}
	if got := names(vectorCase(t)); got != "plane flow " {
		t.Errorf("vector without diagnostics: %q", got)
	}
	// An iid law: every row is the same distribution (here binomial(4,
	// 1/2) on the 5 levels): no heat map, and the mass figure's caption
	// says why.
	iid := gaussianCase(t, 5)
	pi := []float64{1.0 / 16, 4.0 / 16, 6.0 / 16, 4.0 / 16, 1.0 / 16}
	chain := *iid.Chain
	chain.Transition = nil
	for range 5 {
		chain.Transition = append(chain.Transition, pi...)
	}
	iid.Chain, iid.Diag, iid.BaselineDiag = &chain, nil, nil
	if got := names(iid); got != "mass " {
		t.Errorf("iid law: %q, want the mass figure only", got)
	}
	figs, _ := For(iid)
	if !strings.Contains(figs[0].Caption, "independent over time") {
		t.Errorf("iid mass caption: %s", figs[0].Caption)
	}
	if figs, _ := For(gaussianCase(t, 5)); strings.Contains(figs[0].Caption, "independent") {
		t.Errorf("AR(1) mass caption: %s", figs[0].Caption)
	}
	// A VAR(1) with the checks of each coordinate: an error figure per
	// coordinate, each saying which it draws.
	p := solver.VAR{Coef: []float64{0.9, 0.05, 0.02, 0.8}, Cov: []float64{0.01, 0.002, 0.002, 0.02}}
	vc, err := p.Discretize(solver.Settings{States: 5})
	if err != nil {
		t.Fatal(err)
	}
	first, second := solver.Diagnose(vc, p), solver.ComponentChecks(vc, p, 1)
	v := Case{Label: "firm shocks", Chain: vc, Diag: &first, Components: []*solver.Diagnostics{nil, &second}}
	if got := names(v); got != "plane flow errors errors-x1 " {
		t.Errorf("VAR with checks per coordinate: %q", got)
	}
	figs, _ = For(v)
	if figs[2].Title != "Conditional-moment errors by state · x0" || figs[3].Title != "Conditional-moment errors by state · x1" {
		t.Errorf("error figure titles %q, %q", figs[2].Title, figs[3].Title)
	}
	me, _ := MomentErrorsOf(Case{Chain: vc, Diag: &second})
	if me.Series[0].Abs[0][0] != math.Abs(second.States[0].RelErr.Mean) {
		t.Errorf("coordinate 1 figure draws %g, its check says %g", me.Series[0].Abs[0][0], second.States[0].RelErr.Mean)
	}
}

// deepCopy returns an independent copy of a case's chains and diagnostics.
func deepCopy(c Case) Case {
	cp := func(ch *solver.Chain) *solver.Chain {
		if ch == nil {
			return nil
		}
		x := *ch
		x.Grid = append([]float64(nil), ch.Grid...)
		x.Transition = append([]float64(nil), ch.Transition...)
		x.Matched = append([]int(nil), ch.Matched...)
		return &x
	}
	cd := func(d *solver.Diagnostics) *solver.Diagnostics {
		if d == nil {
			return nil
		}
		x := *d
		x.Stationary = append([]float64(nil), d.Stationary...)
		x.States = nil
		for _, s := range d.States {
			s.Level = append([]float64(nil), s.Level...)
			x.States = append(x.States, s)
		}
		return &x
	}
	out := c
	out.Chain = cp(c.Chain)
	out.Diag, out.BaselineDiag = cd(c.Diag), cd(c.BaselineDiag)
	out.Law.Cov = append([]float64(nil), c.Law.Cov...)
	out.Law.MeanVec = append([]float64(nil), c.Law.MeanVec...)
	return out
}

// Computing and drawing every figure leaves the chain exactly as it was.
func TestPlottingNeverMutatesTheChain(t *testing.T) {
	for _, c := range []Case{gaussianCase(t, 9), vectorCase(t)} {
		before := deepCopy(c)
		figs, err := For(c)
		if err != nil {
			t.Fatal(err)
		}
		for _, f := range figs {
			for _, format := range []Format{PNG, SVG} {
				if err := f.Encode(discard{}, format); err != nil {
					t.Fatal(err)
				}
			}
		}
		if !reflect.DeepEqual(before, c) {
			t.Errorf("%s: plotting changed the case", c.Label)
		}
	}
	l, _ := lifeCycleCase(t)
	before := fmt.Sprint(l.Initial, l.Chains[0].Grid, l.Chains[1].Transition, l.Chains[2].Matched)
	f, err := ForLifeCycle(l)
	if err != nil {
		t.Fatal(err)
	}
	if err := f.Encode(discard{}, PNG); err != nil {
		t.Fatal(err)
	}
	if after := fmt.Sprint(l.Initial, l.Chains[0].Grid, l.Chains[1].Transition, l.Chains[2].Matched); after != before {
		t.Error("the life-cycle figure changed its chains")
	}
}

type discard struct{}

func (discard) Write(p []byte) (int, error) { return len(p), nil }

func TestNiceTicks(t *testing.T) {
	cases := []struct {
		min, max float64
		labels   string
	}{
		{0, 0.27, "0 0.05 0.1 0.15 0.2 0.25"},
		{-0.85, 0.85, "-0.75 -0.5 -0.25 0 0.25 0.5 0.75"},
		{25, 55, "25 30 35 40 45 50 55"},
	}
	for _, tc := range cases {
		var got []string
		for _, tk := range (niceTicks{}).Ticks(tc.min, tc.max) {
			if tk.Label != "" {
				got = append(got, tk.Label)
			}
		}
		if s := strings.Join(got, " "); s != tc.labels {
			t.Errorf("[%g, %g]: labels %q, want %q", tc.min, tc.max, s, tc.labels)
		}
	}
}

// The heat map puts state 0 at the top: grid row r holds current state
// N−1−r, and the tick labelled i sits at height N−1−i.
func TestFlowGridPutsStateZeroOnTop(t *testing.T) {
	f := Flow{States: 3, P: []float64{0.1, 0.2, 0.7, 0.3, 0.3, 0.4, 0.5, 0.25, 0.25}, Max: 0.7}
	g := flowGrid{f}
	if g.Z(2, 2) != 0.7 || g.Z(0, 0) != 0.5 || g.Y(2) != 2 {
		t.Errorf("Z(2,2)=%g Z(0,0)=%g: want row 2 to hold state 0", g.Z(2, 2), g.Z(0, 0))
	}
	for _, tk := range stateTicks(3, true).Ticks(0, 2) {
		if tk.Label == "0" && tk.Value != 2 {
			t.Errorf("state 0 labelled at height %g, want 2", tk.Value)
		}
	}
	if n := len(stateTicks(441, false).Ticks(0, 440)); n > 12 {
		t.Errorf("%d ticks for 441 states; minor ticks should stop for large chains", n)
	}
}

// The life-cycle caption names the lines the figure draws, and the true
// process's band only when it is drawn.
func TestAgesCaptionNamesWhatIsDrawn(t *testing.T) {
	l, sds := lifeCycleCase(t)
	fig, err := ForLifeCycle(l)
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(fig.Caption, "thin blue lines its ±2 s.d.") || strings.Contains(fig.Caption, "dashed") || strings.Contains(fig.Caption, "shaded") {
		t.Errorf("caption without the true band: %s", fig.Caption)
	}
	l.TrueSD = sds
	if fig, _ = ForLifeCycle(l); !strings.Contains(fig.Caption, "dashed green lines are ±2 s.d. of the true process") {
		t.Errorf("caption with the true band: %s", fig.Caption)
	}
}
