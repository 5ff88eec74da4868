package pipeline

import (
	"path/filepath"
	"strings"
	"testing"
	"time"
)

func TestParseSpec(t *testing.T) {
	text := `name: harbour
manifest: m/wages.yaml
out: /abs/out
timeout: 90s
stages:
  - name: models
    command: [./bin/modelstage, --quiet]
    estimates:
      - model: burnside
        params: {beta: 0.95, theta: -1.5}
        processes: [dividends]
  - name: py
    command: [python3, stage.py]
    estimates:
      - model: burnside
        params: {beta: 0.95, theta: -1.5}
`
	s, err := Parse(strings.NewReader(text), "p.yaml", "/srv/pipes", "/srv/results")
	if err != nil {
		t.Fatal(err)
	}
	if s.Manifest != "/srv/pipes/m/wages.yaml" || s.Out != "/abs/out" || s.Ledger != "/abs/out/lineage.parquet" {
		t.Errorf("paths: %s, %s, %s", s.Manifest, s.Out, s.Ledger)
	}
	// Relative outputs lie beneath the output root, inputs beside the file.
	rel, err := Parse(strings.NewReader(strings.Replace(text, "out: /abs/out", "out: out/harbour\nledger: ledgers/l.parquet", 1)), "p.yaml", "/srv/pipes", "/srv/results")
	if err != nil {
		t.Fatal(err)
	}
	if rel.Manifest != "/srv/pipes/m/wages.yaml" || rel.Out != "/srv/results/out/harbour" || rel.Ledger != "/srv/results/ledgers/l.parquet" {
		t.Errorf("relative paths: %s, %s, %s", rel.Manifest, rel.Out, rel.Ledger)
	}
	if s.Timeout != 90*time.Second || s.StartTimeout != DefaultStartTimeout || s.Grid != nil {
		t.Errorf("timeouts %v %v, grid %v", s.Timeout, s.StartTimeout, s.Grid)
	}
	if got := s.Stages[0].Command; got[0] != filepath.Join("/srv/pipes", "bin/modelstage") || got[1] != "--quiet" {
		t.Errorf("command %v", got)
	}
	if s.Stages[1].Command[0] != "python3" {
		t.Errorf("bare command resolved: %v", s.Stages[1].Command)
	}
	e := s.Stages[0].Estimates[0]
	if e.Model != "burnside" || e.Params["beta"] != 0.95 || e.Params["theta"] != -1.5 || e.Processes[0] != "dividends" || e.Line != 9 {
		t.Errorf("estimate %+v", e)
	}
}

func TestParseSpecErrors(t *testing.T) {
	head := "name: p\nmanifest: m.yaml\nout: o\n"
	stage := "stages:\n  - name: s\n    command: [x]\n    estimates:\n      - model: m\n"
	cases := []struct{ text, want string }{
		{"", "p.yaml: the pipeline file is empty"},
		{"name: [", "p.yaml: not valid YAML"},
		{head + stage + "colour: red\n", `p.yaml:9:1: colour: unknown key "colour" (known keys: grid, ledger, manifest, name, out, stages, start_timeout, timeout)`},
		{"manifest: m.yaml\nout: o\n" + stage, "p.yaml:1:1: name: missing (required)"},
		{head + "timeout: soon\n" + stage, `p.yaml:4:10: timeout: "soon" is not a positive duration such as 90s or 5m`},
		{head + stage + "        params: {beta: high}\n", `p.yaml:9:24: stages[0].estimates[0].params.beta: want a number`},
		{head + "stages:\n  - name: s\n    command: []\n    estimates:\n      - model: m\n", "p.yaml:6:14: stages[0].command: needs at least the executable"},
		{head + stage + "  - name: s\n    command: [y]\n    estimates:\n      - model: m\n", `p.yaml:9:5: stages[1].name: duplicate stage name "s" (also stages[0])`},
		{head + "stages:\n  - name: bad/name\n    command: [x]\n    estimates:\n      - model: m\n", `p.yaml:5:11: stages[0].name: "bad/name" is not a valid name`},
		{head + "stages: {}\n", "p.yaml:4:9: stages: want a list of stages"},
	}
	for _, tc := range cases {
		_, err := Parse(strings.NewReader(tc.text), "p.yaml", "/d", "/r")
		if err == nil || !strings.HasPrefix(err.Error(), tc.want) {
			t.Errorf("input:\n%s\nerr  = %v\nwant prefix %q", tc.text, err, tc.want)
		}
	}
}
