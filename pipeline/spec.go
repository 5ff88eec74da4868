package pipeline

import (
	"bytes"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"sort"
	"strconv"
	"strings"
	"time"

	"go.yaml.in/yaml/v3"
)

// Spec is a parsed pipeline file.
//
//	name: harbour-wages            # pipeline name, recorded in the ledger
//	manifest: wages.yaml           # the run manifest the grid stage runs
//	out: out/harbour-wages         # folder for chains and estimates, beneath the output root
//	ledger: out/lineage.parquet    # lineage ledger (default: <out>/lineage.parquet)
//	timeout: 2m                    # limit for each call to a stage (default 10m)
//	start_timeout: 30s             # limit for a stage's handshake (default 30s)
//	grid:                          # the grid stage (default: this gridstage, "serve")
//	  command: [gridstage, serve]
//	stages:
//	  - name: models
//	    command: [./bin/modelstage]
//	    estimates:
//	      - model: burnside
//	        params: {beta: 0.95, theta: -1.5}
//	        processes: [dividends]     # optional: only these processes' chains
//	  - name: my-solver
//	    kind: files                    # run under the file contract, not the stage protocol
//	    command: [./solve.sh]
//	    version: "2.1"                 # optional; default: a digest of the command's files
//	    estimates: [...]
//
// Relative input paths (manifest, and commands whose first word contains a
// slash) are resolved against the pipeline file's folder, which is also
// every stage's working folder; relative output paths (out, ledger)
// beneath the output root, as a manifest's output folder is (README,
// "Where output goes").
type Spec struct {
	File, Dir    string // where the pipeline file was read, for messages and paths
	Name         string
	Manifest     string // absolute
	Out          string // absolute
	Ledger       string // absolute
	Timeout      time.Duration
	StartTimeout time.Duration
	Grid         *StageSpec // nil: the caller's default grid stage
	Stages       []StageSpec
}

// StageSpec is one stage of a pipeline.
type StageSpec struct {
	Name string
	// Kind is how the host talks to the stage: KindProtocol (the stage
	// protocol, the default) or KindFiles (plugin.FileStage: the command
	// runs once per chain under the file contract).
	Kind      string
	Command   []string // argv; argv[0] resolved as described on Spec
	Version   string   // KindFiles only: the version recorded in the ledger ("" derives one)
	Estimates []EstimateSpec
	Line, Col int // position of the stage in the pipeline file
}

// Stage kinds.
const (
	KindProtocol = "protocol"
	KindFiles    = "files"
)

// EstimateSpec asks a stage for one model on the pipeline's chains.
type EstimateSpec struct {
	Model     string
	Params    map[string]float64
	Processes []string // empty: every chain
	Line      int
}

// Defaults for Spec fields the file leaves out.
const (
	DefaultTimeout      = 10 * time.Minute
	DefaultStartTimeout = 30 * time.Second
)

// SpecError is a problem in a pipeline file, with its position and field.
type SpecError struct {
	File       string
	Line, Col  int
	Field, Msg string
}

func (e *SpecError) Error() string {
	pos := e.File
	if e.Line > 0 {
		pos += ":" + strconv.Itoa(e.Line) + ":" + strconv.Itoa(e.Col)
	}
	if e.Field == "" {
		return pos + ": " + e.Msg
	}
	return pos + ": " + e.Field + ": " + e.Msg
}

// Load reads the pipeline file at path; outputRoot is the folder its
// relative output paths lie beneath ("" is the current folder).
func Load(path, outputRoot string) (*Spec, error) {
	b, err := os.ReadFile(path)
	if err != nil {
		return nil, &SpecError{File: path, Msg: "cannot read the pipeline file: " + err.Error()}
	}
	abs, err := filepath.Abs(path)
	if err != nil {
		return nil, err
	}
	root, err := filepath.Abs(outputRoot)
	if err != nil {
		return nil, err
	}
	return Parse(bytes.NewReader(b), path, filepath.Dir(abs), root)
}

// Parse reads a pipeline file from r; name labels errors, dir is the
// folder relative input paths resolve against and outputRoot the one
// relative output paths do.
func Parse(r io.Reader, name, dir, outputRoot string) (*Spec, error) {
	b, err := io.ReadAll(io.LimitReader(r, 1<<20+1))
	if err != nil {
		return nil, &SpecError{File: name, Msg: "cannot read the pipeline file: " + err.Error()}
	}
	if len(b) > 1<<20 {
		return nil, &SpecError{File: name, Msg: "the pipeline file is over 1 MiB"}
	}
	var doc yaml.Node
	if err := yaml.Unmarshal(b, &doc); err != nil {
		return nil, &SpecError{File: name, Msg: "not valid YAML: " + strings.TrimPrefix(err.Error(), "yaml: ")}
	}
	if len(doc.Content) == 0 {
		return nil, &SpecError{File: name, Msg: "the pipeline file is empty"}
	}
	p := &parser{file: name}
	s := &Spec{File: name, Dir: dir, Timeout: DefaultTimeout, StartTimeout: DefaultStartTimeout}
	root := doc.Content[0]
	var ledger, out string
	p.mapping(root, "", map[string]func(*yaml.Node, string){
		"name":          func(n *yaml.Node, f string) { s.Name = p.name(n, f) },
		"manifest":      func(n *yaml.Node, f string) { s.Manifest = p.str(n, f) },
		"out":           func(n *yaml.Node, f string) { out = p.str(n, f) },
		"ledger":        func(n *yaml.Node, f string) { ledger = p.str(n, f) },
		"timeout":       func(n *yaml.Node, f string) { s.Timeout = p.duration(n, f) },
		"start_timeout": func(n *yaml.Node, f string) { s.StartTimeout = p.duration(n, f) },
		"grid": func(n *yaml.Node, f string) {
			g := StageSpec{Name: "grid", Line: n.Line}
			p.mapping(n, f, map[string]func(*yaml.Node, string){
				"command": func(n *yaml.Node, f string) { g.Command = p.command(n, f) },
			}, "command")
			s.Grid = &g
		},
		"stages": func(n *yaml.Node, f string) {
			if !p.kind(n, f, yaml.SequenceNode, "a list of stages") {
				return
			}
			for i, sn := range n.Content {
				s.Stages = append(s.Stages, p.stage(sn, fmt.Sprintf("%s[%d]", f, i)))
			}
			if len(n.Content) == 0 {
				p.fail(n, f, "needs at least one stage")
			}
		},
	}, "name", "manifest", "out", "stages")
	if p.err != nil {
		return nil, p.err
	}
	seen := map[string]int{}
	for i, st := range s.Stages {
		if j, ok := seen[st.Name]; ok {
			return nil, &SpecError{File: name, Line: st.Line, Col: st.Col, Field: fmt.Sprintf("stages[%d].name", i),
				Msg: fmt.Sprintf("duplicate stage name %q (also stages[%d])", st.Name, j)}
		}
		seen[st.Name] = i
	}
	s.Manifest = resolve(dir, s.Manifest)
	s.Out = resolve(outputRoot, out)
	if ledger == "" {
		s.Ledger = filepath.Join(s.Out, "lineage.parquet")
	} else {
		s.Ledger = resolve(outputRoot, ledger)
	}
	for i := range s.Stages {
		s.Stages[i].Command[0] = resolveCommand(dir, s.Stages[i].Command[0])
	}
	if s.Grid != nil {
		s.Grid.Command[0] = resolveCommand(dir, s.Grid.Command[0])
	}
	return s, nil
}

func resolve(dir, p string) string {
	if filepath.IsAbs(p) {
		return filepath.Clean(p)
	}
	return filepath.Join(dir, p)
}

// resolveCommand resolves a relative executable path against dir; bare
// names are left for a PATH lookup.
func resolveCommand(dir, c string) string {
	if strings.ContainsRune(c, filepath.Separator) || strings.ContainsRune(c, '/') {
		return resolve(dir, c)
	}
	return c
}

type parser struct {
	file string
	err  *SpecError
}

func (p *parser) fail(n *yaml.Node, field, format string, args ...any) {
	if p.err == nil {
		p.err = &SpecError{File: p.file, Line: n.Line, Col: n.Column, Field: field, Msg: fmt.Sprintf(format, args...)}
	}
}

func (p *parser) kind(n *yaml.Node, field string, k yaml.Kind, want string) bool {
	if n.Kind != k {
		p.fail(n, field, "want %s", want)
		return false
	}
	return true
}

// mapping decodes a mapping node field by field, rejecting unknown and
// duplicate keys and reporting missing required ones.
func (p *parser) mapping(n *yaml.Node, field string, fields map[string]func(*yaml.Node, string), required ...string) {
	if !p.kind(n, field, yaml.MappingNode, "a mapping of keys to values") {
		return
	}
	seen := map[string]bool{}
	for i := 0; i+1 < len(n.Content); i += 2 {
		k, v := n.Content[i], n.Content[i+1]
		f := k.Value
		if field != "" {
			f = field + "." + k.Value
		}
		fn, ok := fields[k.Value]
		if !ok {
			known := make([]string, 0, len(fields))
			for name := range fields {
				known = append(known, name)
			}
			p.fail(k, f, "unknown key %q (known keys: %s)", k.Value, strings.Join(sortedStrings(known), ", "))
			continue
		}
		if seen[k.Value] {
			p.fail(k, f, "duplicate key %q", k.Value)
			continue
		}
		seen[k.Value] = true
		fn(v, f)
	}
	for _, r := range required {
		if !seen[r] {
			f := r
			if field != "" {
				f = field + "." + r
			}
			p.fail(n, f, "missing (required)")
		}
	}
}

func (p *parser) str(n *yaml.Node, field string) string {
	if !p.kind(n, field, yaml.ScalarNode, "a string") {
		return ""
	}
	if n.Value == "" {
		p.fail(n, field, "must not be empty")
	}
	return n.Value
}

var namePattern = regexp.MustCompile(`^[A-Za-z0-9][A-Za-z0-9_.-]*$`)

func (p *parser) name(n *yaml.Node, field string) string {
	s := p.str(n, field)
	if s != "" && !namePattern.MatchString(s) {
		p.fail(n, field, "%q is not a valid name: use letters, digits, '_', '-' and '.', starting with a letter or digit", s)
	}
	return s
}

func (p *parser) duration(n *yaml.Node, field string) time.Duration {
	s := p.str(n, field)
	if s == "" {
		return 0
	}
	d, err := time.ParseDuration(s)
	if err != nil || d <= 0 {
		p.fail(n, field, "%q is not a positive duration such as 90s or 5m", s)
	}
	return d
}

func (p *parser) command(n *yaml.Node, field string) []string {
	if !p.kind(n, field, yaml.SequenceNode, "a list: the executable and its arguments") {
		return nil
	}
	var argv []string
	for i, a := range n.Content {
		argv = append(argv, p.str(a, fmt.Sprintf("%s[%d]", field, i)))
	}
	if len(argv) == 0 {
		p.fail(n, field, "needs at least the executable")
	}
	return argv
}

func (p *parser) stage(n *yaml.Node, field string) StageSpec {
	st := StageSpec{Line: n.Line, Col: n.Column, Kind: KindProtocol}
	var versionAt *yaml.Node
	p.mapping(n, field, map[string]func(*yaml.Node, string){
		"name":    func(n *yaml.Node, f string) { st.Name = p.name(n, f) },
		"command": func(n *yaml.Node, f string) { st.Command = p.command(n, f) },
		"kind": func(n *yaml.Node, f string) {
			st.Kind = p.str(n, f)
			if st.Kind != KindProtocol && st.Kind != KindFiles && st.Kind != "" {
				p.fail(n, f, "%q is not a stage kind: want protocol (the stage protocol, the default) or files (the file contract)", st.Kind)
			}
		},
		"version": func(n *yaml.Node, f string) { st.Version, versionAt = p.str(n, f), n },
		"estimates": func(n *yaml.Node, f string) {
			if !p.kind(n, f, yaml.SequenceNode, "a list of estimates") {
				return
			}
			for i, en := range n.Content {
				st.Estimates = append(st.Estimates, p.estimate(en, fmt.Sprintf("%s[%d]", f, i)))
			}
			if len(n.Content) == 0 {
				p.fail(n, f, "needs at least one estimate")
			}
		},
	}, "name", "command", "estimates")
	if versionAt != nil && st.Kind != KindFiles {
		p.fail(versionAt, field+".version", "applies to stages of kind files only: a protocol stage names its own version")
	}
	return st
}

func (p *parser) estimate(n *yaml.Node, field string) EstimateSpec {
	e := EstimateSpec{Line: n.Line, Params: map[string]float64{}}
	p.mapping(n, field, map[string]func(*yaml.Node, string){
		"model": func(n *yaml.Node, f string) { e.Model = p.str(n, f) },
		"params": func(n *yaml.Node, f string) {
			if !p.kind(n, f, yaml.MappingNode, "a mapping of parameter names to numbers") {
				return
			}
			for i := 0; i+1 < len(n.Content); i += 2 {
				k, v := n.Content[i], n.Content[i+1]
				if _, dup := e.Params[k.Value]; dup {
					p.fail(k, f+"."+k.Value, "duplicate parameter %q", k.Value)
				}
				e.Params[k.Value] = p.number(v, f+"."+k.Value)
			}
		},
		"processes": func(n *yaml.Node, f string) {
			if !p.kind(n, f, yaml.SequenceNode, "a list of process names") {
				return
			}
			for i, pn := range n.Content {
				e.Processes = append(e.Processes, p.str(pn, fmt.Sprintf("%s[%d]", f, i)))
			}
		},
	}, "model")
	return e
}

func (p *parser) number(n *yaml.Node, field string) float64 {
	if n.Kind != yaml.ScalarNode || (n.Tag != "!!int" && n.Tag != "!!float") {
		p.fail(n, field, "want a number")
		return 0
	}
	v, err := strconv.ParseFloat(strings.ReplaceAll(n.Value, "_", ""), 64)
	if err != nil || math.IsInf(v, 0) || math.IsNaN(v) {
		p.fail(n, field, "%q is not a finite number", n.Value)
	}
	return v
}

func sortedStrings(s []string) []string {
	out := append([]string(nil), s...)
	sort.Strings(out)
	return out
}
