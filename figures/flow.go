package figures

import (
	"fmt"
	"image/color"
	"math"
	"strconv"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/palette"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// Flow is the data behind the transition heat map.
type Flow struct {
	// States is the number of states N.
	States int
	// P is a copy of the transition matrix, row-major: P[i*N+j] is the
	// probability of moving from state i to state j.
	P []float64
	// Max is the largest entry, the top of the colour scale.
	Max float64
}

// FlowOf copies the transition matrix of c's chain for the heat map.
func FlowOf(c Case) Flow {
	checkChain(c.Chain)
	f := Flow{States: c.Chain.States(), P: append([]float64(nil), c.Chain.Transition...)}
	for _, p := range f.P {
		f.Max = math.Max(f.Max, p)
	}
	return f
}

// rasterAbove is the number of states above which the heat map is drawn as
// an image rather than as one rectangle per cell.
const rasterAbove = 40

// flowGrid adapts Flow to plotter.GridXYZ: column c is the next state,
// row r the current state.
type flowGrid struct{ f Flow }

func (g flowGrid) Dims() (c, r int)   { return g.f.States, g.f.States }
func (g flowGrid) Z(c, r int) float64 { return g.f.P[r*g.f.States+c] }
func (g flowGrid) X(c int) float64    { return float64(c) }
func (g flowGrid) Y(r int) float64    { return float64(r) }
func (g flowGrid) Min() float64       { return 0 }
func (g flowGrid) Max() float64       { return math.Max(g.f.Max, 1e-300) }

// iridescent is Paul Tol's (2021) sequential "iridescent" scheme, readable
// under colour blindness and in greyscale; it runs from cream (no mass) to
// dark plum (the most likely move).
var iridescent = hexPalette("FEFBE9", "FCF7D5", "F5F3C1", "EAF0B5", "DDECBF", "D0E7CA", "C2E3D2", "B5DDD8",
	"A8D8DC", "9BD2E1", "8DCBE4", "81C4E7", "7BBCE7", "7EB2E4", "88A5DD", "9398D2", "9B8AC4", "9D7DB2",
	"9A709E", "906388", "805770", "684957", "46353A")

type fixedPalette []color.Color

func (p fixedPalette) Colors() []color.Color { return p }

func hexPalette(hex ...string) fixedPalette {
	p := make(fixedPalette, len(hex))
	for i, h := range hex {
		v, _ := strconv.ParseUint(h, 16, 32)
		p[i] = color.RGBA{uint8(v >> 16), uint8(v >> 8), uint8(v), 0xff}
	}
	return p
}

// integerTicks labels whole-number positions, about six of them.
func integerTicks(n int) plot.Ticker {
	return plot.TickerFunc(func(min, max float64) []plot.Tick {
		step := max1(1, int(math.Ceil(float64(n)/6)))
		var ts []plot.Tick
		for i := 0; i < n; i++ {
			t := plot.Tick{Value: float64(i)}
			if i%step == 0 || i == n-1 {
				t.Label = strconv.Itoa(i)
			}
			ts = append(ts, t)
		}
		return ts
	})
}

func max1(a, b int) int {
	if a > b {
		return a
	}
	return b
}

// flowFigure draws the transition matrix as a heat map with a colour bar.
func flowFigure(c Case, f Flow) Figure {
	return Figure{
		Name:    "flow",
		Title:   "Transition matrix",
		Caption: "Row i, column j: the probability of moving from state i to state j next period. A persistent process shows a dark band along the diagonal; mass far from the band means large jumps.",
		Width:   16 * vg.Centimeter, Height: 13 * vg.Centimeter,
		draw: func(dc draw.Canvas) {
			body := drawHeader(dc, "Transition matrix · "+c.Label, fmt.Sprintf("%s, %d states · state 0 is the lowest grid point", c.Chain.Method, f.States))
			p := newPlot("next state j", "current state i")
			hm := plotter.NewHeatMap(flowGrid{f}, palette.Palette(iridescent))
			// Above a few thousand cells a vector map bloats SVG files.
			hm.Rasterized = f.States > rasterAbove
			p.Add(hm)
			p.Y.Scale = plot.InvertedScale{Normalizer: plot.LinearScale{}}
			p.X.Tick.Marker = integerTicks(f.States)
			p.Y.Tick.Marker = integerTicks(f.States)
			p.X.Padding, p.Y.Padding = 0, 0

			barWidth := vg.Length(70)
			main := draw.Crop(body, 0, -barWidth, 0, 0)
			p.Draw(main)

			bar := newPlot("", "transition probability")
			cm := &colorMap{pal: iridescent, max: flowGrid{f}.Max()}
			bar.Add(&plotter.ColorBar{ColorMap: cm, Vertical: true})
			bar.HideX()
			bar.Y.Padding = 0
			side := draw.Crop(body, body.Max.X-body.Min.X-barWidth+8, 0, 0, 0)
			// Match the heat map's vertical extent: its x-axis band at the
			// bottom.
			side = draw.Crop(side, 0, 0, p.DataCanvas(main).Min.Y-main.Min.Y, 0)
			bar.Draw(side)
		},
	}
}

// colorMap maps [0, max] linearly onto a fixed palette for the colour bar,
// with the same binning the heat map uses.
type colorMap struct {
	pal fixedPalette
	max float64
}

func (m *colorMap) At(v float64) (color.Color, error) {
	// The same rounding as plotter.HeatMap, so bar and map agree.
	k := int(v/m.max*float64(len(m.pal)-1) + 0.5)
	k = max(0, min(len(m.pal)-1, k))
	return m.pal[k], nil
}
func (m *colorMap) SetMax(v float64)            { m.max = v }
func (m *colorMap) SetMin(float64)              {}
func (m *colorMap) Max() float64                { return m.max }
func (m *colorMap) Min() float64                { return 0 }
func (m *colorMap) SetAlpha(float64)            {}
func (m *colorMap) Alpha() float64              { return 1 }
func (m *colorMap) Palette(int) palette.Palette { return m.pal }
