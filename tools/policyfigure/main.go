// Command policyfigure draws one transition probability of an AR(1)
// maximum-entropy chain against the persistence ρ under each matching
// policy: the figure of docs/ACCURACY.md. The chain is the one the issue
// measured (σ = 0.1, 4 moments, 21 Gauss-Legendre nodes), and the entry
// drawn is the one the exact policy moves most between neighbouring ρ.
//
// The committed figure is drawn and checked by this package's test
// (go test ./tools/policyfigure -run '^TestPolicyFigure$' -update); the
// command writes the same picture anywhere:
//
//	go run ./tools/policyfigure -out /tmp/matching-rho.png
package main

import (
	"bytes"
	"flag"
	"fmt"
	"image/color"
	"math"
	"os"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"

	"gridstage/solver"
)

func main() {
	out := flag.String("out", "docs/img/matching-rho.png", "PNG file to write")
	steps := flag.Int("steps", 2000, "values of rho in [0.9, 0.999]")
	flag.Parse()
	png, _, err := draw(*steps)
	if err == nil {
		err = os.WriteFile(*out, png, 0o666)
	}
	if err != nil {
		fmt.Fprintln(os.Stderr, "policyfigure:", err)
		os.Exit(1)
	}
}

// draw renders the figure over steps+1 values of ρ and returns the PNG and
// the numbers it draws: the entry, the largest step of each policy between
// neighbouring values of ρ, and the entry under each policy at every
// hundredth value, rounded to what the eye can tell apart.
func draw(steps int) (png []byte, data string, err error) {
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
			return nil, "", err
		}
		if smooth[s], err = chain(rhos[s], solver.MatchSmooth); err != nil {
			return nil, "", err
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
			return nil, "", err
		}
		l.Color, l.Width = series.color, series.width
		p.Add(l)
		p.Legend.Add("matching: "+series.name, l)
	}
	p.Legend.Top = true
	w, err := p.WriterTo(9*vg.Inch, 4.5*vg.Inch, "png")
	if err != nil {
		return nil, "", err
	}
	var b strings.Builder
	var pic bytes.Buffer
	if _, err := w.WriteTo(&pic); err != nil {
		return nil, "", err
	}
	fmt.Fprintf(&b, "entry P[%d][%d]; largest step between neighbouring rho: exact %.2f, smooth %.1e\n", entry/n, entry%n, jump, largestStep(smooth, entry))
	b.WriteString("rho exact smooth\n")
	for s := 0; s <= steps; s += max(1, steps/100) {
		fmt.Fprintf(&b, "%.5f %.3f %.3f\n", rhos[s], exact[s][entry], smooth[s][entry])
	}
	return pic.Bytes(), b.String(), nil
}

// largestStep is the largest change of entry k between neighbouring rows.
func largestStep(rows [][]float64, k int) float64 {
	var step float64
	for s := 1; s < len(rows); s++ {
		step = math.Max(step, math.Abs(rows[s][k]-rows[s-1][k]))
	}
	return step
}
