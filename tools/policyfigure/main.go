// Command policyfigure draws one transition probability of an AR(1)
// maximum-entropy chain against the persistence ρ under each matching
// policy: the figure of docs/ACCURACY.md. The chain is the one the issue
// measured (σ = 0.1, 4 moments, 21 Gauss-Legendre nodes), and the entry
// drawn is the one the exact policy moves most between neighbouring ρ.
//
//	go run ./tools/policyfigure -out docs/img/matching-rho.png
package main

import (
	"flag"
	"fmt"
	"image/color"
	"math"
	"os"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"

	"gridstage/solver"
)

func main() {
	out := flag.String("out", "docs/img/matching-rho.png", "PNG file to write")
	steps := flag.Int("steps", 2000, "values of rho in [0.9, 0.999]")
	flag.Parse()
	if err := draw(*out, *steps); err != nil {
		fmt.Fprintln(os.Stderr, "policyfigure:", err)
		os.Exit(1)
	}
}

func draw(out string, steps int) error {
	const n = 21
	chain := func(rho float64, m solver.Matching) ([]float64, error) {
		c, err := solver.AR1{Rho: rho, Sigma: 0.1}.Discretize(solver.Settings{States: n, Moments: 4, Nodes: solver.NodesGaussLegendre, Matching: m})
		if err != nil {
			return nil, err
		}
		return c.Transition, nil
	}
	rhos := make([]float64, steps+1)
	exact, smooth := make([][]float64, steps+1), make([][]float64, steps+1)
	for s := range rhos {
		rhos[s] = 0.9 + 0.099*float64(s)/float64(steps)
		var err error
		if exact[s], err = chain(rhos[s], solver.MatchExact); err != nil {
			return err
		}
		if smooth[s], err = chain(rhos[s], solver.MatchSmooth); err != nil {
			return err
		}
	}
	entry, jump := 0, 0.0
	for s := 1; s <= steps; s++ {
		for k := range exact[s] {
			if d := math.Abs(exact[s][k] - exact[s-1][k]); d > jump {
				entry, jump = k, d
			}
		}
	}
	p := plot.New()
	p.Title.Text = fmt.Sprintf("P[%d][%d] of an AR(1) chain (21 Gauss-Legendre nodes, 4 moments, sigma 0.1)", entry/n, entry%n)
	p.X.Label.Text = "rho"
	p.Y.Label.Text = "transition probability"
	for _, series := range []struct {
		name  string
		rows  [][]float64
		color color.RGBA
		width vg.Length
	}{{"exact", exact, color.RGBA{R: 200, G: 60, B: 40, A: 255}, 1.2}, {"smooth", smooth, color.RGBA{R: 30, G: 90, B: 200, A: 255}, 1.2}} {
		xy := make(plotter.XYs, len(rhos))
		for s, r := range rhos {
			xy[s].X, xy[s].Y = r, series.rows[s][entry]
		}
		l, err := plotter.NewLine(xy)
		if err != nil {
			return err
		}
		l.Color, l.Width = series.color, series.width
		p.Add(l)
		p.Legend.Add("matching: "+series.name, l)
	}
	p.Legend.Top = true
	return p.Save(9*vg.Inch, 4.5*vg.Inch, out)
}
