package figures

import (
	"fmt"
	"math"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"gridstage/internal/plural"
	"gridstage/solver"
)

// MomentNames are the conditional moments whose errors are plotted, in
// order; the first k of them are "the first k moments" a chain matches.
var MomentNames = [4]string{"mean", "variance", "skewness", "kurtosis"}

// MatchTolerance is the standardized error below which a conditional
// moment counts as matched: six orders of magnitude below the quantity's
// own scale, far above the 1e-10 or so Newton's method reaches and far
// below any error that moves a model's solution (common practice).
const MatchTolerance = 1e-6

// ErrorFloor is where errors of exactly zero, or below it, are drawn on
// the log scale: the rounding error of a double near one.
const ErrorFloor = 1e-16

// MomentErrors is the data behind the conditional-moment error figure.
type MomentErrors struct {
	// XLabel names the horizontal axis: the state level for univariate
	// chains, the state index for vector chains.
	XLabel string
	// Series holds the chain under study first, then its baseline if any.
	Series []ErrorSeries
}

// ErrorSeries is one chain's per-state errors.
type ErrorSeries struct {
	// Method is the chain's method name.
	Method string
	// Requested is the number of moments the chain was asked to match.
	Requested int
	// X is the horizontal position of each state.
	X []float64
	// Abs[k][i] is |standardized error| of moment k in state i, in the
	// units of solver.Diagnostics.RelErr.
	Abs [4][]float64
	// Fallback[i] reports that state i matched fewer moments than
	// requested.
	Fallback []bool
}

// Fallbacks counts the states that fell back.
func (s ErrorSeries) Fallbacks() int {
	var k int
	for _, f := range s.Fallback {
		if f {
			k++
		}
	}
	return k
}

// MomentErrorsOf computes the error figure data; ok is false when the case
// has no diagnostics.
func MomentErrorsOf(c Case) (m MomentErrors, ok bool) {
	checkChain(c.Chain)
	if c.Diag == nil || len(c.Diag.States) != c.Chain.States() {
		return MomentErrors{}, false
	}
	byLevel := c.Chain.Dim == 1
	m.XLabel = "state index"
	if byLevel {
		m.XLabel = c.units()
	}
	main := errorSeries(c.Diag, c.Chain.Moments, byLevel)
	main.Method = c.Chain.Method.String()
	m.Series = append(m.Series, main)
	if b := c.BaselineDiag; b != nil && len(b.States) > 0 {
		requested := 0
		if method, err := solver.ParseMethod(b.Method); err == nil {
			requested = max(method.ExactMoments(), 0)
		}
		m.Series = append(m.Series, errorSeries(b, requested, byLevel))
	}
	return m, true
}

// errorSeries reads one chain's errors from its diagnostics, which carry
// each state's level and matched count.
func errorSeries(d *solver.Diagnostics, requested int, byLevel bool) ErrorSeries {
	n := len(d.States)
	s := ErrorSeries{Method: d.Method, Requested: requested, X: make([]float64, n), Fallback: make([]bool, n)}
	for k := range s.Abs {
		s.Abs[k] = make([]float64, n)
	}
	for i, st := range d.States {
		s.X[i] = float64(i)
		if byLevel && len(st.Level) > 0 {
			s.X[i] = st.Level[0]
		}
		s.Abs[0][i] = math.Abs(st.RelErr.Mean)
		s.Abs[1][i] = math.Abs(st.RelErr.Var)
		s.Abs[2][i] = math.Abs(st.RelErr.Skew)
		s.Abs[3][i] = math.Abs(st.RelErr.Kurt)
		s.Fallback[i] = st.Matched < requested
	}
	return s
}

// errorCeiling is the top of the shared log scale: errors of order one
// mean the moment is wrong outright.
const errorCeiling = 10

// momentsFigure draws one log-scale panel per moment.
func momentsFigure(c Case, m MomentErrors) Figure {
	main := m.Series[0]
	var sub string
	switch k := main.Fallbacks(); {
	case main.Requested == 0:
		sub = main.Method + " targets no conditional moment exactly"
	case k > 0:
		sub = fmt.Sprintf("%s asked to match %s · %d of %d states fell back to fewer", main.Method, plural.Count(main.Requested, "moment", "moments"), k, len(main.X))
	default:
		sub = fmt.Sprintf("%s asked to match %s · every state matched %s", main.Method, plural.Count(main.Requested, "moment", "moments"), plural.Noun(main.Requested, "it", "them all"))
	}
	if len(m.Series) > 1 {
		sub += " · baseline " + m.Series[1].Method
	}
	switch {
	case c.Chain.Dim > 1 && c.SumDiag:
		sub += fmt.Sprintf(" · errors of the sum of the %d levels", c.Chain.Dim)
	case c.Chain.Dim > 1:
		sub += fmt.Sprintf(" · errors of x%d, level %d of %d", c.component, c.component+1, c.Chain.Dim)
	}
	name, title, label := "errors", "Conditional-moment errors by state", c.Label
	if c.Chain.Dim > 1 && !c.SumDiag {
		title += fmt.Sprintf(" · x%d", c.component)
		label += fmt.Sprintf(" · x%d", c.component)
		if c.component > 0 {
			name = fmt.Sprintf("errors-x%d", c.component)
		}
	}
	return Figure{
		Name:    name,
		Title:   title,
		Caption: errorsCaption(m),
		Width:   18 * vg.Centimeter, Height: 14 * vg.Centimeter,
		draw: func(dc draw.Canvas) {
			body := drawHeader(dc, "Conditional-moment errors · "+label, sub)
			plots := make([][]*plot.Plot, 2)
			var keys []key
			for k := range MomentNames {
				p, ks := errorPanel(m, k)
				plots[k/2] = append(plots[k/2], p)
				if k == 0 {
					keys = ks
				}
			}
			body = drawKey(body, keys)
			tiles := draw.Tiles{Rows: 2, Cols: 2, PadX: 14, PadY: 10 + panelTitleHeight, PadTop: panelTitleHeight, PadBottom: 2}
			canvases := plot.Align(plots, tiles, body)
			for r := range plots {
				for col, p := range plots[r] {
					p.Draw(canvases[r][col])
					drawPanelTitle(p.DataCanvas(canvases[r][col]), panelTitle(m, 2*r+col))
				}
			}
		},
	}
}

// errorsCaption says what the error figure draws, in the marks and
// colours it uses: blue circles for the chain, orange triangles for the
// baseline, vermilion squares for states that fell back (errorPanel).
func errorsCaption(m MomentErrors) string {
	c := fmt.Sprintf("Each panel: the error of one conditional moment in every state, in standardized units, on a log scale; blue circles are the %s chain", m.Series[0].Method)
	if len(m.Series) > 1 {
		c += fmt.Sprintf(", orange triangles on a dashed line the %s baseline", m.Series[1].Method)
	}
	c += fmt.Sprintf(". Points below the grey dashed line (%.0e) are matched; points on the floor are exact to rounding.", MatchTolerance)
	if k := m.Series[0].Fallbacks(); k > 0 {
		c += fmt.Sprintf(" Vermilion squares mark the %s that could not match every requested moment.", plural.Count(k, "state", "states"))
	}
	return c
}

// panelLabels are the panel titles, naming the standardization.
var panelLabels = [4]string{"mean (error / cond. s.d.)", "variance (error / variance)", "skewness (error)", "kurtosis (error / kurtosis)"}

// panelTitle names moment k and whether the chain was asked to match it.
func panelTitle(m MomentErrors, k int) string {
	if k < m.Series[0].Requested {
		return panelLabels[k] + " · targeted"
	}
	return panelLabels[k] + " · not targeted"
}

// errorPanel draws moment k and returns the entries of the shared key.
func errorPanel(m MomentErrors, k int) (*plot.Plot, []key) {
	yLabel := ""
	if k%2 == 0 {
		yLabel = "|error|"
	}
	xLabel := ""
	if k >= 2 {
		xLabel = m.XLabel
	}
	p := newPlot(xLabel, yLabel)
	addRules(p)
	p.Y.Scale = plot.LogScale{}
	p.Y.Tick.Marker = decadeTicks{}
	p.Y.Min, p.Y.Max = ErrorFloor/3, errorCeiling

	tol, _ := plotter.NewLine(plotter.XYs{{X: minOf(m.Series[0].X), Y: MatchTolerance}, {X: maxOf(m.Series[0].X), Y: MatchTolerance}})
	tol.LineStyle = draw.LineStyle{Color: muted, Width: 0.8, Dashes: []vg.Length{4, 3}}
	p.Add(tol)

	var keys []key
	styles := []struct {
		line  draw.LineStyle
		glyph draw.GlyphStyle
	}{
		{lineStyle(blue, 0.8), draw.GlyphStyle{Color: blue, Radius: 2.2, Shape: draw.CircleGlyph{}}},
		{draw.LineStyle{Color: orange, Width: 0.8, Dashes: []vg.Length{3, 2}}, draw.GlyphStyle{Color: orange, Radius: 2.6, Shape: draw.TriangleGlyph{}}},
	}
	fellStyle := draw.GlyphStyle{Color: vermillion, Radius: 3.2, Shape: draw.BoxGlyph{}}
	for si := len(m.Series) - 1; si >= 0; si-- { // the chain under study on top
		s := m.Series[si]
		xy := make(plotter.XYs, len(s.X))
		for i := range s.X {
			xy[i].X, xy[i].Y = s.X[i], math.Max(s.Abs[k][i], ErrorFloor)
		}
		line, points, _ := plotter.NewLinePoints(xy)
		line.LineStyle, points.GlyphStyle = styles[si].line, styles[si].glyph
		if si == 0 {
			points.GlyphStyleFunc = func(i int) draw.GlyphStyle {
				if s.Fallback[i] {
					return fellStyle
				}
				return styles[0].glyph
			}
		}
		p.Add(line, points)
		name := s.Method
		if si > 0 {
			name += " (baseline)"
		}
		keys = append([]key{keyOf(name, line, styleThumb(styles[si].glyph))}, keys...)
	}
	if m.Series[0].Fallbacks() > 0 {
		keys = append(keys, keyOf("fell back: fewer moments matched", styleThumb(fellStyle)))
	}
	keys = append(keys, keyOf(fmt.Sprintf("matching tolerance %.0e", MatchTolerance), tol))
	return p, keys
}

// styleThumb draws one glyph as a key swatch.
type styleThumb draw.GlyphStyle

func (g styleThumb) Thumbnail(c *draw.Canvas) { c.DrawGlyph(draw.GlyphStyle(g), c.Center()) }

// decadeTicks labels every fourth power of ten, with minor ticks between.
type decadeTicks struct{}

func (decadeTicks) Ticks(min, max float64) []plot.Tick {
	var ts []plot.Tick
	for e := int(math.Floor(math.Log10(min))); e <= int(math.Ceil(math.Log10(max))); e++ {
		v := math.Pow(10, float64(e))
		if v < min || v > max {
			continue
		}
		t := plot.Tick{Value: v}
		if e%4 == 0 {
			t.Label = fmt.Sprintf("1e%d", e)
			if e == 0 {
				t.Label = "1"
			}
		}
		ts = append(ts, t)
	}
	return ts
}

func minOf(x []float64) float64 {
	m := math.Inf(1)
	for _, v := range x {
		m = math.Min(m, v)
	}
	return m
}

func maxOf(x []float64) float64 {
	m := math.Inf(-1)
	for _, v := range x {
		m = math.Max(m, v)
	}
	return m
}
