package figures

import (
	"bytes"
	"flag"
	"os"
	"path/filepath"
	"testing"
)

// -figures DIR writes every test figure to DIR for a person to look at.
var figuresDir = flag.String("figures", "", "write rendered test figures to this folder")

func TestRenderEveryFigure(t *testing.T) {
	for _, c := range []Case{gaussianCase(t, 9), vectorCase(t)} {
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
