package figures

import (
	"errors"
	"fmt"
	"math"
	"strings"

	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"gridstage/solver"
)

// LifeCycle is an age-varying chain: one chain per age. A chain whose
// state is a vector (a life-cycle product: persistent plus transitory
// income) is drawn by the sum of its coordinates. Figures read it and
// never modify it.
type LifeCycle struct {
	// Label names the process in titles; Units the state levels.
	Label, Units string
	// Ages holds the age of each period, ascending, in model periods: one
	// per chain, plus one for Final when it is given.
	Ages []float64
	// YearsPerPeriod, when > 0, is the length of one model period in
	// years (the manifest's years_per_period); the axis says so.
	YearsPerPeriod float64
	// Chains[t] holds the age-t grid, and its transition matrix moves
	// from the age-t grid to the age-(t+1) grid. All ages have the same
	// number of states.
	Chains []*solver.Chain
	// Final optionally holds the grid of the last age, which no transition
	// leaves (solver.AgeChain.Final), with the chains' dimension.
	Final []float64
	// Initial is the distribution over the first age's grid. If nil, the
	// stationary distribution of the first age's matrix is used instead
	// and the figure says so.
	Initial []float64
	// TrueSD optionally gives the true standard deviation at each age.
	TrueSD []float64
}

// AgeMass is the data behind the life-cycle figure.
type AgeMass struct {
	// Age, Level and Prob list every (age, grid point) pair with the
	// probability of being there: the initial distribution pushed forward
	// through the age-specific matrices.
	Age, Level, Prob []float64
	// Mean and SD are the chain's mean and standard deviation at each age
	// (one entry per age).
	Mean, SD []float64
	// TrueSD repeats LifeCycle.TrueSD (nil if unknown).
	TrueSD []float64
	// InitialAssumed reports that no initial distribution was given.
	InitialAssumed bool
}

// AgeMassOf pushes the initial distribution forward age by age:
//
//	m_{t+1} = m_t P_t.
func AgeMassOf(l LifeCycle) (AgeMass, error) {
	T := len(l.Chains)
	want := T
	if l.Final != nil {
		want++
	}
	if T == 0 || len(l.Ages) != want {
		return AgeMass{}, fmt.Errorf("figures: life cycle has %d chains and %d final grids besides them, and %d ages; want one age per grid", T, want-T, len(l.Ages))
	}
	n, dim := l.Chains[0].States(), l.Chains[0].Dim
	if l.Final != nil && len(l.Final) != n*dim {
		return AgeMass{}, fmt.Errorf("figures: final grid has %d values, want %d states of dimension %d", len(l.Final), n, dim)
	}
	for t, c := range l.Chains {
		checkChain(c)
		if c.Dim != dim || c.States() != n {
			return AgeMass{}, fmt.Errorf("figures: life-cycle chain at age %g has dimension %d and %d states; want %d and %d", l.Ages[t], c.Dim, c.States(), dim, n)
		}
	}
	// level is a state's coordinate, or the sum of its coordinates.
	level := func(grid []float64, i int) float64 {
		var s float64
		for _, x := range grid[i*dim : (i+1)*dim] {
			s += x
		}
		return s
	}
	var am AgeMass
	m := append([]float64(nil), l.Initial...)
	if m == nil {
		pi, err := solver.Stationary(l.Chains[0].Transition, n)
		if err != nil {
			return AgeMass{}, fmt.Errorf("figures: no initial distribution and the first age's chain has no unique stationary one: %w", err)
		}
		m, am.InitialAssumed = pi, true
	}
	if len(m) != n {
		return AgeMass{}, errors.New("figures: initial distribution length differs from the number of states")
	}
	am.TrueSD = append([]float64(nil), l.TrueSD...)
	for t := range l.Ages {
		grid := l.Final
		if t < T {
			grid = l.Chains[t].Grid
		}
		var mean, m2 float64
		for i, p := range m {
			am.Age = append(am.Age, l.Ages[t])
			am.Level = append(am.Level, level(grid, i))
			am.Prob = append(am.Prob, p)
			mean += p * level(grid, i)
		}
		for i, p := range m {
			d := level(grid, i) - mean
			m2 += p * d * d
		}
		am.Mean = append(am.Mean, mean)
		am.SD = append(am.SD, math.Sqrt(m2))
		if t == len(l.Ages)-1 {
			break
		}
		next := make([]float64, n)
		for i, p := range m {
			if p == 0 {
				continue
			}
			for j, q := range l.Chains[t].Row(i) {
				next[j] += p * q
			}
		}
		m = next
	}
	return am, nil
}

// agesFigure draws the grid at every age with circles sized by the mass
// there, the chain's mean, and ±2 s.d. bands of chain and truth.
func agesFigure(l LifeCycle, am AgeMass, ages []float64) Figure {
	sub := fmt.Sprintf("%d ages, %d states each · circle area proportional to probability at that age", len(ages), len(am.Prob)/len(ages))
	if am.InitialAssumed {
		sub += " · no initial distribution given: first age starts stationary"
	}
	units := l.Units
	if units == "" {
		units = "state level (units of the process)"
	}
	if d := l.Chains[0].Dim; d > 1 {
		terms := make([]string, d)
		for k := range terms {
			terms[k] = fmt.Sprintf("x%d", k)
		}
		units = "sum of the coordinates, " + strings.Join(terms, " + ")
		sub += " · points with the same sum overlap"
	}
	ageAxis := "age (model period)"
	if l.YearsPerPeriod > 0 {
		ageAxis = fmt.Sprintf("age (model period; one period = %g years)", l.YearsPerPeriod)
	}
	caption := "Each column of circles is one age's grid; circle area is the probability of that state at that age, starting from the initial distribution. The thick blue line follows the chain's mean, the thin blue lines its ±2 s.d."
	if len(am.TrueSD) == len(ages) {
		caption += " The dashed green lines are ±2 s.d. of the true process, around the chain's mean."
	}
	return Figure{
		Name:    "ages",
		Title:   "Grid and probability mass by age",
		Caption: caption,
		Width:   18 * vg.Centimeter, Height: 11 * vg.Centimeter,
		draw: func(dc draw.Canvas) {
			body := drawHeader(dc, "Life cycle · "+l.Label, sub)
			p := newPlot(ageAxis, units)
			addRules(p)
			var pmax float64
			for _, v := range am.Prob {
				pmax = math.Max(pmax, v)
			}
			pts, _ := plotter.NewScatter(xyOf(am.Age, am.Level))
			pts.GlyphStyleFunc = func(i int) draw.GlyphStyle {
				r := vg.Length(7 * math.Sqrt(am.Prob[i]/pmax))
				return draw.GlyphStyle{Color: skyBlue, Radius: max(r, 0.7), Shape: draw.CircleGlyph{}}
			}
			pts.GlyphStyle = draw.GlyphStyle{Color: skyBlue, Radius: 4, Shape: draw.CircleGlyph{}}
			p.Add(pts)
			keys := []key{keyOf("grid point (area proportional to probability)", pts)}
			mean, _ := plotter.NewLine(xyOf(ages, am.Mean))
			mean.LineStyle = lineStyle(blue, 1.6)
			p.Add(mean)
			keys = append(keys, keyOf("chain mean", mean))
			band := func(mu, sd []float64, sign float64) plotter.XYs {
				xy := make(plotter.XYs, len(ages))
				for t := range ages {
					xy[t] = plotter.XY{X: ages[t], Y: mu[t] + sign*2*sd[t]}
				}
				return xy
			}
			for k, s := range []float64{-1, 1} {
				l, _ := plotter.NewLine(band(am.Mean, am.SD, s))
				l.LineStyle = lineStyle(blue, 0.8)
				p.Add(l)
				if k == 0 {
					keys = append(keys, keyOf("chain ±2 s.d.", l))
				}
			}
			if len(am.TrueSD) == len(ages) {
				for k, s := range []float64{-1, 1} {
					l, _ := plotter.NewLine(band(am.Mean, am.TrueSD, s))
					l.LineStyle = draw.LineStyle{Color: green, Width: 1.2, Dashes: []vg.Length{4, 3}}
					p.Add(l)
					if k == 0 {
						keys = append(keys, keyOf("true ±2 s.d. (around chain mean)", l))
					}
				}
			}
			widen(&p.X, 0.04)
			widen(&p.Y, 0.04)
			p.Draw(drawKey(body, keys))
		},
	}
}
