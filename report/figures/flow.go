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

// flowGrid adapts Flow to plotter.GridXYZ: column c is the next state;
// grid row r, drawn at height r, is current state N−1−r, so state 0 sits at
// the top as in a printed matrix. (Flipping the rows here rather than
// inverting the axis keeps plotter.HeatMap's raster mode, used for large
// chains, drawing the right way up.)
type flowGrid struct{ f Flow }

func (g flowGrid) Dims() (c, r int)   { return g.f.States, g.f.States }
func (g flowGrid) Z(c, r int) float64 { return g.f.P[(g.f.States-1-r)*g.f.States+c] }
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

// stateTicks labels state indices at round steps (about six labels),
// with a minor tick at every state while there are few enough to see.
// With flip set, position v shows state n−1−v (see flowGrid).
func stateTicks(n int, flip bool) plot.Ticker {
	return plot.TickerFunc(func(min, max float64) []plot.Tick {
		var ts []plot.Tick
		label := func(i int) plot.Tick {
			v := float64(i)
			if flip {
				v = float64(n - 1 - i)
			}
			return plot.Tick{Value: v, Label: strconv.Itoa(i)}
		}
		for _, t := range (niceTicks{}).Ticks(0, float64(n-1)) {
			if t.Label != "" && t.Value == math.Trunc(t.Value) {
				ts = append(ts, label(int(t.Value)))
			}
		}
		if n <= 60 {
			for i := 0; i < n; i++ {
				t := label(i)
				t.Label = ""
				ts = append(ts, t)
			}
		}
		return ts
	})
}

// flowFigure draws the transition matrix as a heat map with a colour bar.
func flowFigure(c Case, f Flow) Figure {
	return Figure{
		Name:    "flow",
		Title:   "Transition matrix",
		Caption: "Row i, column j: the probability of moving from state i to state j next period. A persistent process shows a dark band along the diagonal; mass far from the band means large jumps.",
		Width:   16 * vg.Centimeter, Height: 13 * vg.Centimeter,
		draw: func(dc draw.Canvas) {
			order := "state 0 is the lowest grid point"
			if c.Chain.Dim > 1 {
				order = "states in grid order, first component slowest"
			}
			body := drawHeader(dc, "Transition matrix · "+c.Label, fmt.Sprintf("%s, %d states · %s", c.Chain.Method, f.States, order))
			p := newPlot("next state j", "current state i")
			hm := plotter.NewHeatMap(flowGrid{f}, palette.Palette(iridescent))
			// Above a few thousand cells a vector map bloats SVG files.
			hm.Rasterized = f.States > rasterAbove
			p.Add(hm)
			p.X.Tick.Marker = stateTicks(f.States, false)
			p.Y.Tick.Marker = stateTicks(f.States, true)
			p.X.Padding, p.Y.Padding = 0, 0

			barWidth := vg.Length(70)
			main := draw.Crop(body, 0, -barWidth, 0, 0)
			p.Draw(main)

			bar := newPlot("", "transition probability")
			bar.Add(&colourBar{pal: iridescent, max: flowGrid{f}.Max()})
			bar.HideX()
			bar.Y.Padding = 0
			side := draw.Crop(body, body.Max.X-body.Min.X-barWidth+8, 0, 0, 0)
			// Match the heat map's vertical extent: its x-axis band at the
			// bottom.
			data := p.DataCanvas(main)
			side = draw.Crop(side, 0, 0, data.Min.Y-main.Min.Y, data.Max.Y-main.Max.Y)
			bar.Draw(side)
		},
	}
}

// colourBar draws the heat map's palette as a stack of rectangles, one per
// colour, each spanning the values the heat map paints in that colour.
// (Vector rectangles, unlike an embedded image, keep their shape in every
// SVG viewer.)
type colourBar struct {
	pal fixedPalette
	max float64
}

func (b *colourBar) Plot(c draw.Canvas, p *plot.Plot) {
	tx, ty := p.Transforms(&c)
	k := float64(len(b.pal) - 1)
	for i, col := range b.pal {
		// plotter.HeatMap paints value v with colour round(v/max·k).
		lo := math.Max(0, (float64(i)-0.5)/k*b.max)
		hi := math.Min(b.max, (float64(i)+0.5)/k*b.max)
		c.FillPolygon(col, []vg.Point{{X: tx(0), Y: ty(lo)}, {X: tx(1), Y: ty(lo)}, {X: tx(1), Y: ty(hi)}, {X: tx(0), Y: ty(hi)}})
	}
}

func (b *colourBar) DataRange() (xmin, xmax, ymin, ymax float64) { return 0, 1, 0, b.max }
