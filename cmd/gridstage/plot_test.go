package main

import (
	"bytes"
	"image/png"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// chainJSONFile writes the JSON of `discretize ar1` for an invented wage
// shock (ρ = 0.9, 9 states: two edge states fall back) and returns its path.
func chainJSONFile(t *testing.T) string {
	t.Helper()
	code, out, errOut := run(t, "discretize", "ar1", "--rho", "0.9", "--sigma", "0.1", "--states", "9", "--json")
	if code != 0 {
		t.Fatalf("discretize: exit %d: %s", code, errOut)
	}
	path := filepath.Join(t.TempDir(), "wage.json")
	if err := os.WriteFile(path, []byte(out), 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

func TestPlotWritesEveryFigure(t *testing.T) {
	in := chainJSONFile(t)
	for _, format := range []string{"png", "svg"} {
		dir := filepath.Join(t.TempDir(), "figs")
		code, out, errOut := run(t, "plot", in, "--out", dir, "--format", format)
		if code != 0 {
			t.Fatalf("%s: exit %d: %s", format, code, errOut)
		}
		files := strings.Fields(out)
		if len(files) != 3 {
			t.Fatalf("%s: wrote %q, want mass, flow and errors figures", format, files)
		}
		for _, f := range files {
			raw, err := os.ReadFile(f)
			if err != nil {
				t.Fatal(err)
			}
			switch format {
			case "png":
				if _, err := png.Decode(bytes.NewReader(raw)); err != nil {
					t.Errorf("%s is not a PNG: %v", f, err)
				}
			case "svg":
				if !bytes.Contains(raw, []byte("<svg")) {
					t.Errorf("%s is not an SVG", f)
				}
			}
		}
		left, _ := filepath.Glob(filepath.Join(dir, ".*tmp*"))
		if len(left) > 0 {
			t.Errorf("temporary files left behind: %q", left)
		}
	}
}

func TestReportWritesOnePage(t *testing.T) {
	in := chainJSONFile(t)
	out := filepath.Join(t.TempDir(), "wage.html")
	code, stdout, errOut := run(t, "report", in, "--out", out)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	if strings.TrimSpace(stdout) != out {
		t.Errorf("printed %q, want the report path", stdout)
	}
	html, err := os.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{"Use with care", "fell back", "data:image/svg"} {
		if !bytes.Contains(html, []byte(want)) {
			t.Errorf("report lacks %q", want)
		}
	}
	// Default path: beside the input.
	code, stdout, _ = run(t, "report", in)
	if want := strings.TrimSuffix(in, ".json") + ".report.html"; code != 0 || strings.TrimSpace(stdout) != want {
		t.Errorf("default output: exit %d, %q, want %q", code, stdout, want)
	}
}

func TestPlotAndReportRejectBadInput(t *testing.T) {
	in := chainJSONFile(t)
	dir := t.TempDir()
	notOutput := filepath.Join(dir, "notes.txt")
	os.WriteFile(notOutput, []byte("hello"), 0o644)
	otherJSON := filepath.Join(dir, "other.json")
	os.WriteFile(otherJSON, []byte(`{"name": "not a chain"}`), 0o644)
	brokenJSON := filepath.Join(dir, "broken.json")
	os.WriteFile(brokenJSON, []byte(`{"kind": "ar1", "method": "maxent", "grid": [[0],[1]], "transition": [[1]]}`), 0o644)
	cases := []struct {
		args []string
		want string
	}{
		{[]string{"plot", filepath.Join(dir, "missing")}, "no such file or folder"},
		{[]string{"plot", notOutput}, "is not gridstage output"},
		{[]string{"report", otherJSON}, "is not gridstage chain output"},
		{[]string{"plot", brokenJSON}, "field transition has 1 rows for 2 states"},
		{[]string{"plot", in, "--point", "3"}, "no sweep point matches --point 3 (points 0 to 0 exist)"},
		{[]string{"report", in, "--point", "-1"}, "--point -1 is out of range"},
		{[]string{"plot", in, "--where", "rho=0.9"}, `no job sweeps a parameter named "rho"`},
		{[]string{"plot", in, "--where", "rho"}, "want name=value"},
		{[]string{"plot", in, "--format", "gif"}, `--format "gif" is not recognised`},
		{[]string{"plot", in, "--point", "0", "--where", "rho=1"}, "give one of them"},
		{[]string{"plot"}, "accepts 1 arg"},
	}
	for _, tc := range cases {
		code, _, errOut := run(t, append(tc.args, "--out", filepath.Join(dir, "out"))...)
		if code != 2 || !strings.Contains(errOut, tc.want) {
			t.Errorf("%q: exit %d, stderr %q; want exit 2 and %q", tc.args, code, errOut, tc.want)
		}
		if strings.Count(strings.TrimSpace(errOut), "\n") > 0 {
			t.Errorf("%q: error is not one line: %q", tc.args, errOut)
		}
	}
}

// After the main job: run a manifest, then report and plot its output
// folder through the formats reader.
func TestReportAndPlotAfterRun(t *testing.T) {
	out := filepath.Join(t.TempDir(), "kestrel")
	if code, _, errOut := run(t, "run", "../../testdata/report/kestrel-bay.yaml", "--out", out, "--cache", "off"); code != 0 {
		t.Fatalf("run: exit %d: %s", code, errOut)
	}
	code, stdout, errOut := run(t, "report", out)
	if code != 0 {
		t.Fatalf("report: exit %d: %s", code, errOut)
	}
	html, err := os.ReadFile(strings.TrimSpace(stdout))
	if err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{"kestrel-bay-earnings", "1 sound", "1 use with care", "1 do not use",
		"kestrel-bay.yaml", "files verified", "earnings.transitions.parquet"} {
		if !bytes.Contains(html, []byte(want)) {
			t.Errorf("report lacks %q", want)
		}
	}
	dir := filepath.Join(t.TempDir(), "figs")
	code, stdout, errOut = run(t, "plot", out, "--where", "rho=0.9", "--out", dir)
	if code != 0 {
		t.Fatalf("plot: exit %d: %s", code, errOut)
	}
	if got := strings.Fields(stdout); len(got) != 3 || !strings.HasSuffix(got[0], "earnings-p1-mass.png") {
		t.Errorf("plot --where rho=0.9 wrote %q", got)
	}
	code, _, errOut = run(t, "plot", out, "--point", "5")
	if code != 2 || !strings.Contains(errOut, "no sweep point matches --point 5 (points 0 to 1 exist)") {
		t.Errorf("missing point: exit %d, %q", code, errOut)
	}
}
