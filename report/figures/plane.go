package figures

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// Plane is the data behind the figure of a vector chain's states in the
// plane of its first two components.
type Plane struct {
	// X and Y are the first two components of each state; Prob its
	// stationary probability.
	X, Y, Prob []float64
	// Mean is the chain's stationary mean of the two components.
	Mean [2]float64
	// Axes are the principal axes of the chain's stationary covariance of
	// the two components, the longer first.
	Axes [2]PrincipalAxis
	// TrueMean and TrueAxes describe the true stationary law; TrueAxes is
	// empty when the case carries no true covariance.
	TrueMean [2]float64
	TrueAxes []PrincipalAxis
}

// PrincipalAxis is one eigenvector of a 2×2 covariance with the standard
// deviation along it (the square root of its eigenvalue).
type PrincipalAxis struct {
	// Dir is a unit vector, signed so that its first non-zero component is
	// positive.
	Dir [2]float64
	SD  float64
}

// PlaneOf computes the plane figure data of a chain with Dim ≥ 2. It
// returns an error for a univariate chain or one without a unique
// stationary distribution.
func PlaneOf(c Case) (Plane, error) {
	checkChain(c.Chain)
	d := c.Chain.Dim
	if d < 2 {
		return Plane{}, errors.New("figures: the plane figure is for vector chains (dimension 2 or more)")
	}
	pi, err := stationaryOf(c.Chain, c.Diag)
	if err != nil {
		return Plane{}, err
	}
	n := c.Chain.States()
	p := Plane{X: make([]float64, n), Y: make([]float64, n), Prob: append([]float64(nil), pi...)}
	for i := 0; i < n; i++ {
		s := c.Chain.State(i)
		p.X[i], p.Y[i] = s[0], s[1]
		p.Mean[0] += pi[i] * s[0]
		p.Mean[1] += pi[i] * s[1]
	}
	var cov [3]float64 // xx, xy, yy
	for i := range p.X {
		dx, dy := p.X[i]-p.Mean[0], p.Y[i]-p.Mean[1]
		cov[0] += pi[i] * dx * dx
		cov[1] += pi[i] * dx * dy
		cov[2] += pi[i] * dy * dy
	}
	p.Axes = principalAxes(cov)
	if len(c.Law.Cov) == d*d {
		tc := [3]float64{c.Law.Cov[0], c.Law.Cov[1], c.Law.Cov[d+1]}
		ax := principalAxes(tc)
		p.TrueAxes = ax[:]
		if len(c.Law.MeanVec) >= 2 {
			p.TrueMean = [2]float64{c.Law.MeanVec[0], c.Law.MeanVec[1]}
		}
	}
	return p, nil
}

// principalAxes returns the eigen-decomposition of the symmetric matrix
// [[xx, xy], [xy, yy]], largest eigenvalue first.
func principalAxes(cov [3]float64) [2]PrincipalAxis {
	var eig mat.EigenSym
	if !eig.Factorize(mat.NewSymDense(2, []float64{cov[0], cov[1], cov[1], cov[2]}), true) {
		panic("figures: eigen-decomposition of a 2×2 symmetric matrix failed")
	}
	vals := eig.Values(nil) // ascending
	var vecs mat.Dense
	eig.VectorsTo(&vecs)
	var out [2]PrincipalAxis
	for k := 0; k < 2; k++ {
		col := 1 - k
		dir := [2]float64{vecs.At(0, col), vecs.At(1, col)}
		if dir[0] < 0 || (dir[0] == 0 && dir[1] < 0) {
			dir[0], dir[1] = -dir[0], -dir[1]
		}
		out[k] = PrincipalAxis{Dir: dir, SD: math.Sqrt(math.Max(vals[col], 0))}
	}
	return out
}

// axisSpan is how many standard deviations each drawn half-axis spans.
const axisSpan = 2

// planeFigure draws the states as circles of area proportional to their
// stationary probability, with the principal axes.
func planeFigure(c Case, pl Plane) Figure {
	sub := fmt.Sprintf("%s, %d states · levels x0 and x1 of %d · axes span ±%d s.d.", c.Chain.Method, len(pl.X), c.Chain.Dim, axisSpan)
	caption := "Each circle is a state; its area is the chain's long-run probability. Solid lines: principal axes of the chain's stationary covariance; dashed: those of the true process. Matching axes mean the chain reproduces the correlation and spread of the shocks."
	if independent(c.Chain) {
		caption += independentNote
	}
	return Figure{
		Name:    "plane",
		Title:   "States in the plane",
		Caption: caption,
		Width:   16 * vg.Centimeter, Height: 15 * vg.Centimeter,
		draw: func(dc draw.Canvas) {
			body := drawHeader(dc, "States in the plane · "+c.Label, sub)
			p := newPlot("x0 ("+c.units()+")", "x1 ("+c.units()+")")
			addRules(p)
			var pmax float64
			for _, v := range pl.Prob {
				pmax = math.Max(pmax, v)
			}
			pts, _ := plotter.NewScatter(xyOf(pl.X, pl.Y))
			pts.GlyphStyleFunc = func(i int) draw.GlyphStyle {
				r := vg.Length(9 * math.Sqrt(pl.Prob[i]/pmax))
				return draw.GlyphStyle{Color: skyBlue, Radius: max(r, 0.8), Shape: draw.CircleGlyph{}}
			}
			pts.GlyphStyle = draw.GlyphStyle{Color: skyBlue, Radius: 4, Shape: draw.CircleGlyph{}}
			p.Add(pts)
			keys := []key{keyOf("state (area proportional to probability)", pts)}
			colors := [2]draw.LineStyle{lineStyle(blue, 2), lineStyle(vermillion, 2)}
			for k, ax := range pl.Axes {
				l, _ := plotter.NewLine(axisLine(pl.Mean, ax))
				l.LineStyle = colors[k]
				p.Add(l)
				keys = append(keys, keyOf(fmt.Sprintf("chain axis %d (s.d. %.3g)", k+1, ax.SD), l))
			}
			for k, ax := range pl.TrueAxes {
				l, _ := plotter.NewLine(axisLine(pl.TrueMean, ax))
				l.LineStyle = draw.LineStyle{Color: green, Width: 1.2, Dashes: []vg.Length{4, 3}}
				p.Add(l)
				if k == 0 {
					keys = append(keys, keyOf("true axes", l))
				}
			}
			body = drawKey(body, keys)
			widen(&p.X, 0.06)
			widen(&p.Y, 0.06)
			equalAspect(p, body)
			p.Draw(body)
		},
	}
}

func axisLine(m [2]float64, ax PrincipalAxis) plotter.XYs {
	h := axisSpan * ax.SD
	return plotter.XYs{{X: m[0] - h*ax.Dir[0], Y: m[1] - h*ax.Dir[1]}, {X: m[0] + h*ax.Dir[0], Y: m[1] + h*ax.Dir[1]}}
}

// equalAspect widens the shorter axis range so one unit has the same
// length on both axes: principal axes then look perpendicular.
func equalAspect(p *plot.Plot, c draw.Canvas) {
	dc := p.DataCanvas(c)
	w, h := float64(dc.Max.X-dc.Min.X), float64(dc.Max.Y-dc.Min.Y)
	xr, yr := p.X.Max-p.X.Min, p.Y.Max-p.Y.Min
	if w <= 0 || h <= 0 || xr <= 0 || yr <= 0 {
		return
	}
	if xr/w > yr/h {
		extra := (xr/w*h - yr) / 2
		p.Y.Min, p.Y.Max = p.Y.Min-extra, p.Y.Max+extra
	} else {
		extra := (yr/h*w - xr) / 2
		p.X.Min, p.X.Max = p.X.Min-extra, p.X.Max+extra
	}
}

// widen pads an axis range by a fraction of its length on each side, so
// large glyphs at the edges are not cut.
func widen(a *plot.Axis, frac float64) {
	d := (a.Max - a.Min) * frac
	a.Min, a.Max = a.Min-d, a.Max+d
}
