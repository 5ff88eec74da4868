package report

import (
	"fmt"
	"html/template"
	"math"
	"sort"
	"strconv"
	"strings"

	"gridstage/internal/plural"
)

// A space map shows a job's sweep points over two swept parameters (or
// one): three panels of cells — the worst verdict, the share of states
// that fell back to fewer moments, and the worst conditional-moment error
// — so that a run of thousands of points can be read at a glance and the
// troubled region found.

// pointStat is what the maps need of one sweep point, over all its ages.
type pointStat struct {
	params map[string]float64
	level  Level
	// counts of states, and of states that fell back
	states, fallbacks int
	// worst is the largest standardized error, over states and ages, of
	// the moments the chain was asked to match.
	worst float64
}

// axis places one parameter's values into cells: one per distinct value
// when there are few, equal-width bins otherwise.
type axis struct {
	name   string
	values []float64 // distinct values, sorted (categorical axes)
	lo, hi float64   // range (binned axes)
	n      int       // number of cells
	binned bool
}

// categoricalLimit is the most distinct values an axis shows one cell
// each; binnedCells the cells of a binned axis.
const (
	categoricalLimit = 24
	binnedCells      = 32
)

func newAxis(name string, stats []pointStat) axis {
	seen := map[float64]bool{}
	a := axis{name: name, lo: math.Inf(1), hi: math.Inf(-1)}
	for _, s := range stats {
		v := s.params[name]
		if !seen[v] {
			seen[v] = true
			a.values = append(a.values, v)
		}
		a.lo, a.hi = math.Min(a.lo, v), math.Max(a.hi, v)
	}
	sort.Float64s(a.values)
	if len(a.values) <= categoricalLimit {
		a.n = len(a.values)
		return a
	}
	a.values, a.binned, a.n = nil, true, binnedCells
	return a
}

// cell returns the cell index of value v.
func (a axis) cell(v float64) int {
	if !a.binned {
		return sort.SearchFloat64s(a.values, v)
	}
	k := int(float64(a.n) * (v - a.lo) / (a.hi - a.lo))
	return min(max(k, 0), a.n-1)
}

// label describes cell k's values.
func (a axis) label(k int) string {
	if !a.binned {
		return a.name + " = " + short4(a.values[k])
	}
	w := (a.hi - a.lo) / float64(a.n)
	return fmt.Sprintf("%s in [%s, %s]", a.name, short4(a.lo+w*float64(k)), short4(a.lo+w*float64(k+1)))
}

// ticks returns up to max labelled positions: (cell coordinate from 0 to
// n, text).
func (a axis) ticks(limit int) []tick {
	var out []tick
	if !a.binned {
		step := (len(a.values) + limit - 1) / limit
		for k := 0; k < len(a.values); k += step {
			out = append(out, tick{float64(k) + 0.5, short4(a.values[k])})
		}
		return out
	}
	for k := 0; k < limit; k++ {
		f := float64(k) / float64(limit-1)
		out = append(out, tick{f * float64(a.n), short4(a.lo + f*(a.hi-a.lo))})
	}
	return out
}

type tick struct {
	at   float64
	text string
}

func short4(v float64) string { return strconv.FormatFloat(v, 'g', 4, 64) }

// spaceCell aggregates the points that fall in one cell.
type spaceCell struct {
	count             int
	levels            [3]int
	states, fallbacks int
	worst             float64
}

// spaceMap is the aggregated grid of one job.
type spaceMap struct {
	x, y  axis // y.n == 1 and y.name == "" for a single parameter
	cells []spaceCell
	total int
}

// chooseAxes returns the two swept parameters with the most distinct
// values (ties in name order); the second is empty with one parameter.
func chooseAxes(params []string, stats []pointStat) (string, string) {
	type cand struct {
		name     string
		distinct int
	}
	var cs []cand
	for _, p := range params {
		seen := map[float64]bool{}
		for _, s := range stats {
			seen[s.params[p]] = true
		}
		cs = append(cs, cand{p, len(seen)})
	}
	sort.SliceStable(cs, func(i, j int) bool { return cs[i].distinct > cs[j].distinct })
	switch {
	case len(cs) == 0:
		return "", ""
	case len(cs) == 1 || cs[1].distinct < 2:
		return cs[0].name, ""
	}
	x, y := cs[0].name, cs[1].name
	if y < x { // reading order: the first name across
		x, y = y, x
	}
	return x, y
}

// newSpaceMap bins the points of a job; nil when the job sweeps nothing
// or has a single point.
func newSpaceMap(params []string, stats []pointStat) *spaceMap {
	if len(stats) < 2 {
		return nil
	}
	xn, yn := chooseAxes(params, stats)
	if xn == "" {
		return nil
	}
	m := &spaceMap{x: newAxis(xn, stats), y: axis{n: 1}, total: len(stats)}
	if yn != "" {
		m.y = newAxis(yn, stats)
	}
	m.cells = make([]spaceCell, m.x.n*m.y.n)
	for _, s := range stats {
		i := m.x.cell(s.params[xn])
		j := 0
		if yn != "" {
			j = m.y.cell(s.params[yn])
		}
		c := &m.cells[j*m.x.n+i]
		c.count++
		c.levels[s.level]++
		c.states += s.states
		c.fallbacks += s.fallbacks
		c.worst = math.Max(c.worst, s.worst)
	}
	return m
}

// Panel geometry, in SVG user units (pixels at 100 %).
const (
	panelW, panelH   = 300.0, 300.0
	plotL, plotT     = 54.0, 34.0
	plotW            = 236.0
	plotHFull        = 190.0
	plotHSingleParam = 40.0
)

// Colours: the verdict colours of the page (Okabe and Ito 2008), and two
// sequential scales read from light (good) to dark (bad).
var levelColours = [3]string{"#009e73", "#e69f00", "#d55e00"}

// fallbackScale runs from no state falling back (white) to every state
// (dark blue).
var fallbackScale = []rgb{{247, 251, 255}, {198, 219, 239}, {107, 174, 214}, {33, 113, 181}, {8, 48, 107}}

// errorScale runs over log10 of the worst error from 1e-14 (pale yellow)
// to 1 and beyond (dark purple).
var errorScale = []rgb{{255, 255, 204}, {161, 218, 180}, {65, 182, 196}, {44, 127, 184}, {37, 52, 148}, {40, 10, 80}}

const errorLogLo, errorLogHi = -14.0, 0.0

type rgb struct{ r, g, b float64 }

// at interpolates the scale at f in [0, 1].
func at(scale []rgb, f float64) string {
	if math.IsNaN(f) {
		f = 1 // an error that could not be computed counts as the worst
	}
	f = math.Min(math.Max(f, 0), 1)
	pos := f * float64(len(scale)-1)
	k := min(int(pos), len(scale)-2)
	t := pos - float64(k)
	a, b := scale[k], scale[k+1]
	return fmt.Sprintf("#%02x%02x%02x", int(a.r+t*(b.r-a.r)+0.5), int(a.g+t*(b.g-a.g)+0.5), int(a.b+t*(b.b-a.b)+0.5))
}

func errorFraction(e float64) float64 {
	if e <= 0 {
		return 0
	}
	return (math.Log10(e) - errorLogLo) / (errorLogHi - errorLogLo)
}

// panels renders the three panels as inline SVG.
func (m *spaceMap) panels() []template.HTML {
	kinds := []struct {
		title  string
		colour func(c spaceCell) string
		legend func(b *strings.Builder, y float64)
	}{
		{"Worst verdict", func(c spaceCell) string {
			for l := Unfit; l >= Sound; l-- {
				if c.levels[l] > 0 {
					return levelColours[l]
				}
			}
			return "none"
		}, verdictLegend},
		{"Share of states that fell back", func(c spaceCell) string {
			return at(fallbackScale, float64(c.fallbacks)/float64(max(c.states, 1)))
		}, func(b *strings.Builder, y float64) { scaleLegend(b, y, fallbackScale, "0%", "50%", "100%") }},
		{"Worst error of a requested moment", func(c spaceCell) string {
			return at(errorScale, errorFraction(c.worst))
		}, func(b *strings.Builder, y float64) { scaleLegend(b, y, errorScale, "1e-14", "1e-7", "≥ 1") }},
	}
	var out []template.HTML
	for _, k := range kinds {
		out = append(out, m.panel(k.title, k.colour, k.legend))
	}
	return out
}

func (m *spaceMap) panel(title string, colour func(spaceCell) string, legend func(*strings.Builder, float64)) template.HTML {
	plotH := plotHFull
	if m.y.name == "" {
		plotH = plotHSingleParam
	}
	height := plotT + plotH + 92
	var b strings.Builder
	fmt.Fprintf(&b, `<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 %g %g" width="%g" height="%g" role="img" aria-label="%s over %s">`,
		panelW, height, panelW, height, esc(title), esc(m.axesText()))
	fmt.Fprintf(&b, `<text x="8" y="18" font-size="13" font-weight="600">%s</text>`, esc(title))
	cw, ch := plotW/float64(m.x.n), plotH/float64(m.y.n)
	fmt.Fprintf(&b, `<rect x="%g" y="%g" width="%g" height="%g" fill="#f1f1ee"/>`, plotL, plotT, plotW, plotH)
	for j := 0; j < m.y.n; j++ {
		for i := 0; i < m.x.n; i++ {
			c := m.cells[j*m.x.n+i]
			if c.count == 0 {
				continue
			}
			// Row 0 at the bottom, as on a chart.
			x, y := plotL+float64(i)*cw, plotT+plotH-float64(j+1)*ch
			fmt.Fprintf(&b, `<rect x="%.1f" y="%.1f" width="%.2f" height="%.2f" fill="%s"><title>%s</title></rect>`,
				x, y, cw, ch, colour(c), esc(m.cellText(i, j, c)))
		}
	}
	fmt.Fprintf(&b, `<rect x="%g" y="%g" width="%g" height="%g" fill="none" stroke="#1f2326" stroke-width="0.8"/>`, plotL, plotT, plotW, plotH)
	for _, t := range m.x.ticks(5) {
		x := plotL + t.at*cw
		fmt.Fprintf(&b, `<line x1="%.1f" x2="%.1f" y1="%g" y2="%g" stroke="#1f2326"/><text x="%.1f" y="%g" font-size="10" text-anchor="middle">%s</text>`,
			x, x, plotT+plotH, plotT+plotH+4, x, plotT+plotH+15, esc(t.text))
	}
	fmt.Fprintf(&b, `<text x="%g" y="%g" font-size="11" text-anchor="middle">%s</text>`, plotL+plotW/2, plotT+plotH+29, esc(m.x.name))
	if m.y.name != "" {
		for _, t := range m.y.ticks(5) {
			y := plotT + plotH - t.at*ch
			fmt.Fprintf(&b, `<line x1="%g" x2="%g" y1="%.1f" y2="%.1f" stroke="#1f2326"/><text x="%g" y="%.1f" font-size="10" text-anchor="end">%s</text>`,
				plotL-4, plotL, y, y, plotL-6, y+3.5, esc(t.text))
		}
		fmt.Fprintf(&b, `<text transform="translate(12 %g) rotate(-90)" font-size="11" text-anchor="middle">%s</text>`, plotT+plotH/2, esc(m.y.name))
	}
	legend(&b, plotT+plotH+44)
	b.WriteString(`</svg>`)
	return template.HTML(b.String())
}

func verdictLegend(b *strings.Builder, y float64) {
	x := plotL
	for l := Sound; l <= Unfit; l++ {
		fmt.Fprintf(b, `<rect x="%g" y="%g" width="12" height="12" fill="%s"/><text x="%g" y="%g" font-size="10">%s %s</text>`,
			x, y, levelColours[l], x+16, y+10, l.Mark(), esc(l.Label()))
		x += []float64{60, 96, 0}[l]
	}
}

func scaleLegend(b *strings.Builder, y float64, scale []rgb, lo, mid, hi string) {
	const steps = 24
	w := plotW / steps
	for k := 0; k < steps; k++ {
		fmt.Fprintf(b, `<rect x="%.1f" y="%g" width="%.2f" height="10" fill="%s"/>`, plotL+float64(k)*w, y, w+0.3, at(scale, (float64(k)+0.5)/steps))
	}
	fmt.Fprintf(b, `<text x="%g" y="%g" font-size="10">%s</text><text x="%g" y="%g" font-size="10" text-anchor="middle">%s</text><text x="%g" y="%g" font-size="10" text-anchor="end">%s</text>`,
		plotL, y+22, esc(lo), plotL+plotW/2, y+22, esc(mid), plotL+plotW, y+22, esc(hi))
}

func (m *spaceMap) axesText() string {
	if m.y.name == "" {
		return m.x.name
	}
	return m.x.name + " and " + m.y.name
}

// cellText is the tooltip of a cell: where it is and what it holds.
func (m *spaceMap) cellText(i, j int, c spaceCell) string {
	where := m.x.label(i)
	if m.y.name != "" {
		where += ", " + m.y.label(j)
	}
	var parts []string
	for l := Sound; l <= Unfit; l++ {
		if c.levels[l] > 0 {
			parts = append(parts, fmt.Sprintf("%d %s", c.levels[l], strings.ToLower(l.Label())))
		}
	}
	return fmt.Sprintf("%s: %s (%s); %.0f%% of states fell back; worst error %s",
		where, plural.Count(c.count, "point", "points"), strings.Join(parts, ", "),
		100*float64(c.fallbacks)/float64(max(c.states, 1)), sci(c.worst))
}

// esc escapes text for SVG inside HTML.
func esc(s string) string { return template.HTMLEscapeString(s) }
