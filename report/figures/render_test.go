package figures

import (
	"bytes"
	"flag"
	"os"
	"path/filepath"
	"testing"

	"gridstage/solver"
)

// -figures DIR writes every test figure to DIR for a person to look at.
var figuresDir = flag.String("figures", "", "write rendered test figures to this folder")

func TestRenderEveryFigure(t *testing.T) {
	vp := solver.VAR{Coef: []float64{0.7, 0.05, 0.1, 0.6}, Cov: []float64{0.01, 0.004, 0.004, 0.02}}
	vc, err := vp.Discretize(solver.Settings{States: 7, Moments: 2})
	if err != nil {
		t.Fatal(err)
	}
	two := Case{Label: "two-sector", Units: "log productivity", Chain: vc, Law: Law{Cov: vp.StationaryCov(), MeanVec: vp.StationaryMean(), Gaussian: true}}
	for _, c := range []Case{gaussianCase(t, 9), vectorCase(t), two} {
		figs, err := For(c)
		if err != nil {
			t.Fatal(err)
		}
		for _, f := range figs {
			for _, format := range []Format{PNG, SVG} {
				var buf bytes.Buffer
				if err := f.Encode(&buf, format); err != nil {
					t.Fatalf("%s.%s: %v", f.Name, format, err)
				}
				if buf.Len() < 1000 {
					t.Errorf("%s.%s: only %d bytes", f.Name, format, buf.Len())
				}
				if *figuresDir != "" {
					os.WriteFile(filepath.Join(*figuresDir, c.Label+"-"+f.Name+"."+string(format)), buf.Bytes(), 0o644)
				}
			}
		}
	}
	l, _ := lifeCycleCase(t)
	f, err := ForLifeCycle(l)
	if err != nil {
		t.Fatal(err)
	}
	var buf bytes.Buffer
	if err := f.Encode(&buf, PNG); err != nil {
		t.Fatal(err)
	}
	if *figuresDir != "" {
		os.WriteFile(filepath.Join(*figuresDir, "earnings-ages.png"), buf.Bytes(), 0o644)
	}
}
