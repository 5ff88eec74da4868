package figures

import (
	"errors"
	"fmt"
	"math"
	"sort"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// Mass is the data behind the stationary-distribution figure of a
// univariate chain, with states in ascending order of level.
type Mass struct {
	// Levels are the grid points; Prob their stationary probabilities.
	Levels, Prob []float64
	// Lo and Hi bound the cell of each grid point: midpoints between
	// neighbours, −Inf and +Inf at the ends.
	Lo, Hi []float64
	// TrueProb is the probability the true law gives each cell,
	//
	//	F(Hi) − F(Lo),
	//
	// so it sums to one and compares with Prob directly; nil if the law is
	// unknown.
	TrueProb []float64
	// CurveX and CurveY trace the true density times the local cell width
	// (interpolated linearly between grid points): the density drawn in
	// units of probability per grid cell.
	CurveX, CurveY []float64
	// Gaussian reports whether the overlay is the exact law (true) or a
	// normal reference with the true mean and s.d. (false).
	Gaussian bool
	// TotalVariation is ½ Σ |Prob − TrueProb|, the largest gap between the
	// chain and the true law over any set of cells; NaN if the law is unknown.
	TotalVariation float64
}

// curvePoints is the number of mesh points on the density curve.
const curvePoints = 241

// MassOf computes the stationary-distribution figure data of a univariate
// chain. It returns an error for a vector chain or one without a unique
// stationary distribution.
func MassOf(c Case) (Mass, error) {
	checkChain(c.Chain)
	if c.Chain.Dim != 1 {
		return Mass{}, errors.New("figures: the stationary-mass figure is for univariate chains")
	}
	pi, err := stationaryOf(c.Chain, c.Diag)
	if err != nil {
		return Mass{}, err
	}
	n := c.Chain.States()
	order := make([]int, n)
	for i := range order {
		order[i] = i
	}
	sort.SliceStable(order, func(a, b int) bool { return c.Chain.Grid[order[a]] < c.Chain.Grid[order[b]] })
	m := Mass{Levels: make([]float64, n), Prob: make([]float64, n), Lo: make([]float64, n), Hi: make([]float64, n),
		Gaussian: c.Law.Gaussian, TotalVariation: math.NaN()}
	for k, i := range order {
		m.Levels[k] = c.Chain.Grid[i]
		m.Prob[k] = pi[i]
	}
	for k := range m.Levels {
		m.Lo[k], m.Hi[k] = math.Inf(-1), math.Inf(1)
		if k > 0 {
			m.Lo[k] = (m.Levels[k-1] + m.Levels[k]) / 2
		}
		if k < n-1 {
			m.Hi[k] = (m.Levels[k] + m.Levels[k+1]) / 2
		}
	}
	if !(c.Law.SD > 0) {
		return m, nil
	}
	mu, sd := c.Law.Mean, c.Law.SD
	cdf := func(x float64) float64 { return 0.5 * math.Erfc(-(x-mu)/(sd*math.Sqrt2)) }
	pdf := func(x float64) float64 {
		z := (x - mu) / sd
		return math.Exp(-z*z/2) / (sd * math.Sqrt(2*math.Pi))
	}
	m.TrueProb = make([]float64, n)
	m.TotalVariation = 0
	for k := range m.Levels {
		m.TrueProb[k] = cdf(m.Hi[k]) - cdf(m.Lo[k])
		m.TotalVariation += math.Abs(m.Prob[k]-m.TrueProb[k]) / 2
	}
	width := cellWidths(m.Levels)
	lo, hi := m.Levels[0]-width[0]/2, m.Levels[n-1]+width[n-1]/2
	m.CurveX = make([]float64, curvePoints)
	m.CurveY = make([]float64, curvePoints)
	for k := range m.CurveX {
		x := lo + (hi-lo)*float64(k)/float64(curvePoints-1)
		m.CurveX[k] = x
		m.CurveY[k] = pdf(x) * interpolate(m.Levels, width, x)
	}
	return m, nil
}

// cellWidths returns the width of each grid point's cell; the unbounded end
// cells take the distance to their one neighbour.
func cellWidths(levels []float64) []float64 {
	n := len(levels)
	w := make([]float64, n)
	for k := range levels {
		switch {
		case n == 1:
			w[k] = 1
		case k == 0:
			w[k] = levels[1] - levels[0]
		case k == n-1:
			w[k] = levels[n-1] - levels[n-2]
		default:
			w[k] = (levels[k+1] - levels[k-1]) / 2
		}
	}
	return w
}

// interpolate evaluates the piecewise-linear function through (xs, ys) at
// x, constant beyond the ends. xs is ascending.
func interpolate(xs, ys []float64, x float64) float64 {
	n := len(xs)
	if x <= xs[0] {
		return ys[0]
	}
	if x >= xs[n-1] {
		return ys[n-1]
	}
	k := sort.SearchFloat64s(xs, x) // xs[k-1] < x <= xs[k]
	t := (x - xs[k-1]) / (xs[k] - xs[k-1])
	return ys[k-1] + t*(ys[k]-ys[k-1])
}

// massFigure draws the stationary mass of a univariate chain.
func massFigure(c Case, m Mass) Figure {
	subtitle := fmt.Sprintf("%s, %d states", c.Chain.Method, len(m.Levels))
	if !math.IsNaN(m.TotalVariation) {
		subtitle += fmt.Sprintf(" · total-variation gap to the true law %.2g", m.TotalVariation)
	}
	caption := "Bars: the chain's long-run probability of each grid point. Line and rings: the probability the true stationary law puts on each grid cell. Bars that track the line mean the chain reproduces the process's long-run spread."
	if independent(c.Chain) {
		caption += independentNote
	}
	return Figure{
		Name:    "mass",
		Title:   "Stationary distribution on the grid",
		Caption: caption,
		Width:   16 * vg.Centimeter, Height: 10 * vg.Centimeter,
		draw: func(dc draw.Canvas) {
			body := drawHeader(dc, "Stationary distribution · "+c.Label, subtitle)
			p := newPlot(c.units(), "probability per grid cell")
			addRules(p)
			bars := &massBars{levels: m.Levels, prob: m.Prob, width: cellWidths(m.Levels)}
			p.Add(bars)
			keys := []key{keyOf("chain: stationary probability", bars)}
			if m.TrueProb != nil {
				curve, _ := plotter.NewLine(xyOf(m.CurveX, m.CurveY))
				curve.LineStyle = lineStyle(green, 1.6)
				rings, _ := plotter.NewScatter(xyOf(m.Levels, m.TrueProb))
				rings.GlyphStyle = draw.GlyphStyle{Color: green, Radius: 2.6, Shape: draw.RingGlyph{}}
				p.Add(curve, rings)
				label := "true stationary law, mass per cell"
				if !m.Gaussian {
					label = "normal reference (true mean and s.d.)"
				}
				keys = append(keys, keyOf(label, curve, rings))
			}
			p.Y.Min = 0
			p.Draw(drawKey(body, keys))
		},
	}
}

// massBars draws one bar per grid point, 70% of its cell wide.
type massBars struct {
	levels, prob, width []float64
}

func (b *massBars) Plot(c draw.Canvas, p *plot.Plot) {
	tx, ty := p.Transforms(&c)
	for k, x := range b.levels {
		half := 0.35 * b.width[k]
		pts := []vg.Point{
			{X: tx(x - half), Y: ty(0)}, {X: tx(x + half), Y: ty(0)},
			{X: tx(x + half), Y: ty(b.prob[k])}, {X: tx(x - half), Y: ty(b.prob[k])},
		}
		c.FillPolygon(skyBlue, c.ClipPolygonXY(pts))
		c.StrokeLines(lineStyle(blue, 0.7), c.ClipLinesXY(append(pts, pts[0]))...)
	}
}

func (b *massBars) DataRange() (xmin, xmax, ymin, ymax float64) {
	n := len(b.levels)
	xmin = b.levels[0] - 0.5*b.width[0]
	xmax = b.levels[n-1] + 0.5*b.width[n-1]
	for _, p := range b.prob {
		ymax = math.Max(ymax, p)
	}
	return xmin, xmax, 0, ymax
}

// Thumbnail draws the legend swatch.
func (b *massBars) Thumbnail(c *draw.Canvas) {
	pts := []vg.Point{{X: c.Min.X, Y: c.Min.Y}, {X: c.Max.X, Y: c.Min.Y}, {X: c.Max.X, Y: c.Max.Y}, {X: c.Min.X, Y: c.Max.Y}}
	c.FillPolygon(skyBlue, pts)
	c.StrokeLines(lineStyle(blue, 0.7), append(pts, pts[0]))
}

// xyOf pairs two equal-length slices for plotters (copying them).
func xyOf(x, y []float64) plotter.XYs {
	xy := make(plotter.XYs, len(x))
	for i := range x {
		xy[i].X, xy[i].Y = x[i], y[i]
	}
	return xy
}
