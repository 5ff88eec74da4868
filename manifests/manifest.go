package manifests

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"regexp"
	"sort"
	"strconv"
	"strings"

	"go.yaml.in/yaml/v3"
)

// Output formats.
const (
	FormatParquet = "parquet"
	FormatArrow   = "arrow"
)

// maxManifestBytes bounds the size of a manifest file.
const maxManifestBytes = 16 << 20

// Manifest is a parsed, validated run manifest with its jobs.
type Manifest struct {
	// File is the name the manifest was read under; Dir the folder its
	// relative paths are resolved against.
	File, Dir string
	// Run names the run.
	Run string
	// Description is free text; it does not enter any hash.
	Description string
	Output      Output
	Processes   []Process
	// Jobs lists every process × sweep point, processes in manifest order,
	// points in sweep order.
	Jobs []Job
	// Hash is the manifest hash (docs/HASHES.md).
	Hash string
}

// Output says where a run's files go and in which format.
type Output struct {
	// Folder as written in the manifest (default: the run name).
	Folder string
	// Format is FormatParquet (the default) or FormatArrow.
	Format string
}

// Process summarises one process of the manifest.
type Process struct {
	Name, Kind string
	Pos        Pos
	// Swept lists the swept parameters, sorted; empty without a sweep.
	Swept []string
	// Sensitivities asks for the chains' parameter derivatives, written
	// as a table of their own (the process's sensitivities key).
	Sensitivities bool
	// Jobs are the indices of the process's jobs in Manifest.Jobs; job
	// Jobs[k] is sweep point k.
	Jobs []int
}

// OutputDir returns the output folder: an absolute folder as it is, a
// relative one beneath root, the output root ("" is the current folder).
// Output never goes beside the manifest, which may sit among sources
// (README, "Where output goes").
func (m *Manifest) OutputDir(root string) string {
	if filepath.IsAbs(m.Output.Folder) {
		return m.Output.Folder
	}
	return filepath.Join(root, m.Output.Folder)
}

// Load reads and validates the manifest at path. Relative paths of its
// inputs (draw tables) are resolved against its folder; the output folder
// against the output root (OutputDir). Errors
// about the manifest are an ErrorList.
func Load(path string) (*Manifest, error) {
	// A FIFO or device would block the open or never end: refuse anything
	// but a regular file, as for draw tables.
	if fi, err := os.Stat(path); err == nil && !fi.Mode().IsRegular() {
		what := "not a regular file"
		if fi.IsDir() {
			what = "a folder"
		}
		return nil, ErrorList{{Pos: Pos{File: path}, Msg: "cannot read the manifest: it is " + what + ": want a YAML file", Err: ErrFile}}
	}
	f, err := os.Open(path)
	if err != nil {
		return nil, ErrorList{{Pos: Pos{File: path}, Msg: "cannot read the manifest: " + pathErr(err), Err: ErrFile}}
	}
	defer f.Close()
	return Parse(f, path, filepath.Dir(path))
}

// Parse reads and validates a manifest from r. name labels positions in
// error messages; dir is the folder relative paths are resolved against.
// On any problem it returns an ErrorList with every problem found.
func Parse(r io.Reader, name, dir string) (*Manifest, error) {
	data, err := io.ReadAll(io.LimitReader(r, maxManifestBytes+1))
	if err != nil {
		return nil, ErrorList{{Pos: Pos{File: name}, Msg: "cannot read the manifest: " + err.Error(), Err: ErrFile}}
	}
	if len(data) > maxManifestBytes {
		return nil, ErrorList{{Pos: Pos{File: name}, Msg: fmt.Sprintf("the manifest is over %d bytes", maxManifestBytes), Err: ErrFile}}
	}
	d := &decoder{file: name, dir: dir, r: &reporter{}}
	root := d.document(data)
	if root == nil {
		return nil, d.r.err()
	}
	m := d.decodeManifest(root)
	if err := d.r.err(); err != nil {
		return nil, err
	}
	m.File, m.Dir = name, dir
	return m, nil
}

// document parses the YAML and returns its root node, or nil after
// reporting a syntax error or an empty or multi-document input.
func (d *decoder) document(data []byte) (root *yaml.Node) {
	defer func() {
		// The YAML library is not expected to panic; if it does on some
		// input, report it as a syntax error rather than crash a run.
		if p := recover(); p != nil {
			d.r.add(loc{pos: Pos{File: d.file, Line: 1, Column: 1}}, ErrSyntax, "the YAML reader failed: %v", p)
			root = nil
		}
	}()
	dec := yaml.NewDecoder(bytes.NewReader(data))
	var doc yaml.Node
	if err := dec.Decode(&doc); err != nil {
		if errors.Is(err, io.EOF) {
			d.r.add(loc{pos: Pos{File: d.file, Line: 1, Column: 1}}, ErrMissing, "the manifest is empty: want a mapping with run, output and processes")
			return nil
		}
		d.syntax(err, data)
		return nil
	}
	var extra yaml.Node
	if err := dec.Decode(&extra); err == nil {
		d.r.add(d.at(&extra, ""), ErrSyntax, "a second YAML document starts here: want one manifest per file")
		return nil
	} else if !errors.Is(err, io.EOF) {
		d.syntax(err, data)
		return nil
	}
	if len(doc.Content) == 0 {
		d.r.add(loc{pos: Pos{File: d.file, Line: 1, Column: 1}}, ErrMissing, "the manifest is empty: want a mapping with run, output and processes")
		return nil
	}
	return doc.Content[0]
}

var yamlLine = regexp.MustCompile(`^yaml: line (\d+): (.*)$`)

// syntax reports a YAML syntax error. The library gives the line only; the
// column is that of the line's first non-blank character.
func (d *decoder) syntax(err error, data []byte) {
	msg := err.Error()
	line, col := 1, 1
	if sm := yamlLine.FindStringSubmatch(msg); sm != nil {
		line, _ = strconv.Atoi(sm[1])
		msg = sm[2]
		lines := strings.Split(string(data), "\n")
		if line >= 1 && line <= len(lines) {
			text := lines[line-1]
			col = len(text) - len(strings.TrimLeft(text, " \t")) + 1
		}
	} else {
		msg = strings.TrimPrefix(msg, "yaml: ")
	}
	d.r.add(loc{pos: Pos{File: d.file, Line: line, Column: col}}, ErrSyntax, "invalid YAML: %s", msg)
}

const runWant = "a run name of 1 to 64 letters, digits, '.', '_' or '-', starting with a letter or digit"

func (d *decoder) decodeManifest(root *yaml.Node) *Manifest {
	top := d.mapping(root, "", "a mapping with run, output and processes")
	if top == nil {
		return nil
	}
	m := &Manifest{}
	run := top.text("run", runWant)
	switch {
	case run.set && !namePattern.MatchString(run.v):
		d.r.add(run.at, ErrRange, "%q is not a valid name: want %s", run.v, runWant)
	case !run.set && !run.bad:
		top.missing("run", runWant)
	}
	m.Run = run.v
	m.Description = top.text("description", "text").v
	// templates holds YAML anchors that processes merge with <<; its
	// content is checked where it is merged, not here.
	top.get("templates")
	m.Output = Output{Folder: m.Run, Format: FormatParquet}
	if on := top.get("output"); on != nil {
		om := d.mapping(on, "output", "a mapping with folder and format")
		if om != nil {
			if f := om.text("folder", "a folder name"); f.set {
				if f.v == "" {
					d.r.add(f.at, ErrRange, "the folder is empty: want a folder name")
				}
				m.Output.Folder = f.v
			}
			if f := om.choice("format", []string{FormatParquet, FormatArrow}); f.set {
				m.Output.Format = f.v
			}
			om.finish(nil)
		}
	}
	var specs []*processSpec
	list, ok := top.list("processes", "a list of processes")
	switch {
	case ok && len(list.Content) == 0:
		d.r.add(d.at(list, "processes"), ErrMissing, "the list is empty: want at least one process")
	case !ok && !top.has("processes"):
		top.missing("processes", "a list of processes")
	}
	if ok {
		byName := map[string]*processSpec{}
		for i, item := range list.Content {
			path := joinIndex("processes", i)
			p := d.decodeProcess(item, path, roleEntry)
			if p == nil {
				continue
			}
			if p.name.set {
				if first, dup := byName[p.name.v]; dup {
					d.r.add(p.name.at, ErrDuplicate, "%q is already the name of %s (line %d): want a unique name", p.name.v, first.at.path, first.at.pos.Line)
				} else {
					byName[p.name.v] = p
				}
			}
			specs = append(specs, p)
		}
	}
	top.finish(nil)

	total := 0
	for _, p := range specs {
		if p.sweep != nil {
			total += p.sweep.points()
		} else {
			total++
		}
	}
	if total > maxJobs {
		d.r.add(d.at(list, "processes"), ErrRange, "the sweeps ask for %d jobs or more: want at most %d", total, maxJobs)
		return nil
	}
	for _, p := range specs {
		jobs := expand(d.r, p)
		if len(jobs) == 0 {
			continue
		}
		proc := Process{Name: p.name.v, Kind: p.kind.v, Pos: p.at.pos, Sensitivities: p.sensitivities.v}
		for _, prm := range jobs[0].Params {
			proc.Swept = append(proc.Swept, prm.Name)
		}
		sort.Strings(proc.Swept)
		for _, j := range jobs {
			proc.Jobs = append(proc.Jobs, len(m.Jobs))
			m.Jobs = append(m.Jobs, j)
		}
		m.Processes = append(m.Processes, proc)
	}
	if d.r.failed() {
		return nil
	}
	m.Hash = manifestHash(m.Run, m.Output.Format, m.Jobs, sensitivityProcesses(m.Processes))
	return m
}

// ParseSpec rebuilds a job from its canonical spec (as stored in an output
// file's metadata), so that a chain can be recomputed and compared. The
// job has no process name and point 0. Positions in errors refer to
// "canonical spec".
func ParseSpec(canonical []byte) (Job, error) {
	d := &decoder{file: "canonical spec", r: &reporter{}}
	root := d.document(canonical)
	if root == nil {
		return Job{}, d.r.err()
	}
	p := d.decodeProcess(root, "", roleSpec)
	if p == nil || d.r.failed() {
		return Job{}, d.r.err()
	}
	q := p.clone()
	if !q.check(d.r) || !q.resolveAuto(d.r) {
		return Job{}, d.r.err()
	}
	return newJob(q, 0, nil, &jobSource{fixed: q}), nil
}
