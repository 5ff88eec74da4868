package figures

import (
	"image/color"
	"math"
	"strconv"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// The palette is Okabe and Ito (2008), "Color Universal Design": eight
// colours that stay distinct under the common forms of colour blindness.
var (
	ink        = color.RGBA{0x22, 0x22, 0x22, 0xff} // text and axes
	muted      = color.RGBA{0x6b, 0x6b, 0x6b, 0xff} // subtitles, reference lines
	rule       = color.RGBA{0xe4, 0xe4, 0xe0, 0xff} // grid lines
	paper      = color.RGBA{0xff, 0xff, 0xff, 0xff}
	blue       = color.RGBA{0x00, 0x72, 0xb2, 0xff} // the chain under study
	skyBlue    = color.RGBA{0x56, 0xb4, 0xe9, 0xff} // fills of the chain
	orange     = color.RGBA{0xe6, 0x9f, 0x00, 0xff} // the baseline
	vermillion = color.RGBA{0xd5, 0x5e, 0x00, 0xff} // fallbacks and failures
	green      = color.RGBA{0x00, 0x9e, 0x73, 0xff} // the true process
)

// sans is the typeface of every label; Liberation Sans ships with gonum/plot
// and is metric-compatible with Arial, so SVG text falls back cleanly.
var sans = font.Font{Typeface: "Liberation", Variant: "Sans"}

const (
	titleSize    = 13
	subtitleSize = 9.5
	labelSize    = 10
	tickSize     = 8.5
)

// headerHeight is the space a figure reserves for its title block.
const headerHeight = vg.Length(38)

// newPlot returns a plot in the house style: no title (figures draw their
// own header), sans labels, light horizontal rules, quiet axes.
func newPlot(xLabel, yLabel string) *plot.Plot {
	p := plot.New()
	p.BackgroundColor = paper
	for _, a := range []*plot.Axis{&p.X, &p.Y} {
		a.Label.TextStyle.Font = font.From(sans, labelSize)
		a.Label.TextStyle.Color = ink
		a.Label.Padding = 4
		a.Tick.Label.Font = font.From(sans, tickSize)
		a.Tick.Label.Color = ink
		a.Tick.Color = muted
		a.Tick.Width = 0.6
		a.Tick.Length = 4
		a.Color = muted
		a.Width = 0.6
		a.Padding = 3
		a.Tick.Marker = niceTicks{}
	}
	p.X.Label.Text = xLabel
	p.Y.Label.Text = yLabel
	p.Legend.TextStyle.Font = font.From(sans, tickSize)
	p.Legend.TextStyle.Color = ink
	p.Legend.Top = true
	p.Legend.ThumbnailWidth = 14
	return p
}

// addRules draws light horizontal rules behind the data.
func addRules(p *plot.Plot) {
	g := plotter.NewGrid()
	g.Vertical.Color = nil
	g.Horizontal.Color = rule
	g.Horizontal.Width = 0.6
	p.Add(g)
}

// drawHeader writes a title and a muted subtitle at the top left of c and
// returns the canvas below them.
func drawHeader(c draw.Canvas, title, subtitle string) draw.Canvas {
	c.SetColor(paper)
	c.Fill(c.Rectangle.Path())
	left := c.Min.X + 8
	top := c.Max.Y - 6
	ts := draw.TextStyle{Color: ink, Font: font.From(sans, titleSize), XAlign: draw.XLeft, YAlign: draw.YTop, Handler: plot.DefaultTextHandler}
	c.FillText(ts, vg.Point{X: left, Y: top}, title)
	ss := ts
	ss.Color = muted
	ss.Font = font.From(sans, subtitleSize)
	c.FillText(ss, vg.Point{X: left, Y: top - 17}, subtitle)
	return draw.Crop(c, 0, -6, 0, -headerHeight)
}

// lineStyle is a solid line of the given colour and width.
func lineStyle(c color.Color, w vg.Length) draw.LineStyle {
	return draw.LineStyle{Color: c, Width: w}
}

// key is one entry of a figure's key: a swatch drawn by the plotters it
// names, then the text.
type key struct {
	name   string
	thumbs []plot.Thumbnailer
}

func keyOf(name string, thumbs ...plot.Thumbnailer) key { return key{name, thumbs} }

// drawKey lays the entries out left to right in rows across the top of c,
// under the header and outside the data, and returns the canvas below.
func drawKey(c draw.Canvas, keys []key) draw.Canvas {
	if len(keys) == 0 {
		return c
	}
	ts := draw.TextStyle{Color: ink, Font: font.From(sans, tickSize), XAlign: draw.XLeft, YAlign: draw.YCenter, Handler: plot.DefaultTextHandler}
	const (
		swatch = vg.Length(16)
		gap    = vg.Length(5)
		sep    = vg.Length(16)
		row    = vg.Length(15)
	)
	left := c.Min.X + 8
	x, y := left, c.Max.Y-row/2
	for _, k := range keys {
		// 15% slack: a viewer without Liberation Sans may substitute a
		// wider face (DejaVu Sans) for the SVG text.
		w := swatch + gap + ts.Width(k.name)*1.15
		if x > left && x+w > c.Max.X {
			x, y = left, y-row
		}
		icon := &draw.Canvas{Canvas: c.Canvas, Rectangle: vg.Rectangle{
			Min: vg.Point{X: x, Y: y - 5}, Max: vg.Point{X: x + swatch, Y: y + 5},
		}}
		for _, t := range k.thumbs {
			t.Thumbnail(icon)
		}
		c.FillText(ts, vg.Point{X: x + swatch + gap, Y: y}, k.name)
		x += w + sep
	}
	return draw.Crop(c, 0, 0, 0, -(c.Max.Y-y)-row/2-2)
}

// panelTitleHeight is the strip above each panel of a multi-panel figure.
const panelTitleHeight = vg.Length(16)

// drawPanelTitle writes a panel's title just above its data area.
func drawPanelTitle(data draw.Canvas, title string) {
	ts := draw.TextStyle{Color: ink, Font: font.From(sans, labelSize), XAlign: draw.XLeft, YAlign: draw.YBottom, Handler: plot.DefaultTextHandler}
	data.FillText(ts, vg.Point{X: data.Min.X, Y: data.Max.Y + 5}, title)
}

// niceTicks marks about six round values (1, 2, 2.5 or 5 times a power of
// ten apart) with a minor tick between each pair; gonum's default marks
// only two or three on short ranges.
type niceTicks struct{}

func (niceTicks) Ticks(min, max float64) []plot.Tick {
	if !(max > min) || math.IsInf(max-min, 0) {
		return plot.DefaultTicks{}.Ticks(min, max)
	}
	mag := math.Pow(10, math.Floor(math.Log10((max-min)/6)))
	step := mag
	for _, m := range []float64{2, 2.5, 5, 10} {
		// Keep the step whose number of intervals is closest to six.
		if math.Abs((max-min)/(m*mag)-6) < math.Abs((max-min)/step-6) {
			step = m * mag
		}
	}
	var ts []plot.Tick
	for k := math.Ceil(min / step * 2); k <= math.Floor(max/step*2); k++ {
		v := k * step / 2
		if math.Abs(v) < step*1e-9 {
			v = 0
		}
		t := plot.Tick{Value: v}
		if int64(k)%2 == 0 {
			t.Label = strconv.FormatFloat(v, 'g', 6, 64)
		}
		ts = append(ts, t)
	}
	return ts
}
