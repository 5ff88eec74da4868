package arrays

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"sort"
	"strconv"

	"gridstage/formats"
	"gridstage/solver"
)

// Kinds of export, as named on the command line.
const (
	Npz = "npz"
	Mat = "mat"
	CSV = "csv"
)

// AllKinds lists every kind of export in the order they are written.
var AllKinds = []string{Npz, Mat, CSV}

// Options choose what Export writes. The zero value writes every kind for
// every process.
type Options struct {
	// Kinds is a subset of AllKinds; empty means all.
	Kinds []string
	// Process limits the export to one process; empty means all.
	Process string
}

// Written describes the export of one process.
type Written struct {
	Process string
	// Dir is the folder holding the process's exports.
	Dir string
	// Points is the number of sweep points exported.
	Points int
	// Files is the number of files written, the provenance sidecar
	// included.
	Files int
}

// ProvenanceFile is the name of the sidecar in each process's folder.
const ProvenanceFile = "provenance.json"

// UsageError reports an export that cannot start because of what was
// asked (an unknown kind or process); nothing was written.
type UsageError struct{ Problem string }

func (e *UsageError) Error() string { return "arrays: " + e.Problem }

// Export verifies the output folder src (formats.Verify: every content
// hash, row and chain hash), then writes, for each process, a folder
// dst/<process> holding the requested kinds: point-<i>.npz and
// point-<i>.mat per sweep point, the wide CSV tables, and provenance.json.
// Each process's folder is assembled under a hidden temporary name and
// renamed into place whole, replacing an earlier export of the process;
// an error leaves no partial folder. dst is created if needed.
//
// The error is a *formats.NotOutputError when src is not gridstage output,
// a *UsageError for options that do not fit src, and otherwise what
// verification or writing reported.
func Export(src, dst string, opt Options) ([]Written, error) {
	kinds := map[string]bool{}
	for _, k := range opt.Kinds {
		ok := false
		for _, a := range AllKinds {
			ok = ok || a == k
		}
		if !ok {
			return nil, &UsageError{Problem: fmt.Sprintf("unknown kind of export %q (want npz, mat or csv)", k)}
		}
		kinds[k] = true
	}
	if len(kinds) == 0 {
		for _, k := range AllKinds {
			kinds[k] = true
		}
	}
	if fi, err := os.Stat(src); err != nil || !fi.IsDir() {
		return nil, &formats.NotOutputError{Path: src, Reason: "want an output folder (a run's --out)"}
	}
	rep, err := formats.Verify(src)
	if err != nil {
		return nil, err
	}
	hashes := map[formats.SetRef]map[string]string{}
	for _, f := range rep.Files {
		ref, _ := formats.RefOf(f.Path)
		if hashes[ref] == nil {
			hashes[ref] = map[string]string{}
		}
		hashes[ref][f.Table] = f.ContentHash
	}
	refs, err := formats.FindSets(src)
	if err != nil {
		return nil, err
	}
	var chosen []formats.SetRef
	var names []string
	seen := map[string]bool{}
	for _, ref := range refs {
		names = append(names, ref.Process)
		if opt.Process != "" && ref.Process != opt.Process {
			continue
		}
		if seen[ref.Process] {
			return nil, &UsageError{Problem: fmt.Sprintf("%s holds process %s both as Parquet and as Arrow: export one copy (move the other away)", src, ref.Process)}
		}
		seen[ref.Process] = true
		chosen = append(chosen, ref)
	}
	if len(chosen) == 0 {
		return nil, &UsageError{Problem: fmt.Sprintf("no process %q in %s (processes there: %v)", opt.Process, src, names)}
	}
	if err := os.MkdirAll(dst, 0o755); err != nil {
		return nil, err
	}
	var out []Written
	for _, ref := range chosen {
		w, err := exportSet(ref, hashes[ref], dst, kinds)
		if err != nil {
			return out, err
		}
		out = append(out, w)
	}
	return out, nil
}

// provenanceDoc is the sidecar: where the arrays came from and a SHA-256
// of every file written beside it.
type provenanceDoc struct {
	Run            string            `json:"run"`
	Process        string            `json:"process"`
	Kind           string            `json:"kind"`
	Method         string            `json:"method"`
	Dim            int               `json:"dim"`
	Params         []string          `json:"params"`
	ManifestHash   string            `json:"manifest_hash"`
	NumericVersion string            `json:"numeric_version"`
	ToolVersion    string            `json:"tool_version"`
	FormatVersion  string            `json:"format_version"`
	SpecDigest     string            `json:"spec_digest"`
	ContentHashes  map[string]string `json:"content_hashes"`
	Points         []pointDoc        `json:"points"`
	Files          map[string]string `json:"files"`
}

type pointDoc struct {
	Point     int       `json:"point"`
	Ages      int       `json:"ages"`
	SpecHash  string    `json:"spec_hash"`
	ChainHash string    `json:"chain_hash"`
	Params    []float64 `json:"param_values"`
	Files     []string  `json:"files,omitempty"`
}

// setExport writes the exports of one set into a staging folder.
type setExport struct {
	stage   string
	kinds   map[string]bool
	width   int
	hashes  string
	doc     provenanceDoc
	tables  []*wideCSV
	byName  map[string]*wideCSV
	written int
}

func exportSet(ref formats.SetRef, contentHashes map[string]string, dst string, kinds map[string]bool) (w Written, err error) {
	r, err := formats.Open(ref, nil)
	if err != nil {
		return w, err
	}
	defer r.Close()
	stage, err := os.MkdirTemp(dst, "."+ref.Process+".tmp-")
	if err != nil {
		return w, err
	}
	x := &setExport{stage: stage, kinds: kinds, width: len(strconv.Itoa(max(r.Points-1, 0))), byName: map[string]*wideCSV{}}
	defer func() {
		for _, t := range x.tables {
			t.close()
		}
		if err != nil {
			os.RemoveAll(stage)
		}
	}()
	b, _ := json.Marshal(contentHashes) // keys sorted by encoding/json
	x.hashes = string(b)
	h := r.Header
	x.doc = provenanceDoc{Run: h.Run, Process: h.Process, Kind: h.Kind, Method: h.Method, Dim: h.Dim, Params: nonNilNames(h.Params),
		ManifestHash: h.ManifestHash, NumericVersion: h.Numeric, ToolVersion: h.Tool, FormatVersion: formats.FormatVersion,
		SpecDigest: r.SpecDigest, ContentHashes: contentHashes, Points: []pointDoc{}, Files: map[string]string{}}
	if kinds[CSV] {
		if err := x.openTables(h); err != nil {
			return w, err
		}
	}
	var cur *Point
	flush := func() error {
		if cur == nil {
			return nil
		}
		cur.ChainHash = formats.ChainHash(cur.Records)
		return x.point(cur)
	}
	for {
		rec, err := r.Next()
		if err == io.EOF {
			break
		}
		if err != nil {
			return w, err
		}
		if cur == nil || rec.Point != cur.Index() {
			if err := flush(); err != nil {
				return w, err
			}
			cur = &Point{Header: h}
		}
		cur.Records = append(cur.Records, rec)
	}
	if err := flush(); err != nil {
		return w, err
	}
	for _, name := range sortedTableNames(x.byName) {
		t := x.byName[name]
		if err := x.file(name, func(out io.Writer) error { return t.finish(out) }); err != nil {
			return w, err
		}
	}
	// The scratch files of the tables live in the staging folder: remove
	// them before it becomes the export.
	for _, t := range x.tables {
		t.close()
	}
	x.tables = nil
	doc, err := json.MarshalIndent(x.doc, "", "  ")
	if err != nil {
		return w, err
	}
	if err := x.writeFile(ProvenanceFile, append(doc, '\n')); err != nil {
		return w, err
	}
	final := filepath.Join(dst, ref.Process)
	if err := replaceDir(stage, final); err != nil {
		return w, err
	}
	return Written{Process: ref.Process, Dir: final, Points: len(x.doc.Points), Files: x.written}, nil
}

func nonNilNames(v []string) []string {
	if v == nil {
		return []string{}
	}
	return v
}

// The CSV tables of a process (docs/FORMATS.md, "Arrays for other
// languages").
const (
	csvPoints             = "points.csv"
	csvStates             = "states.csv"
	csvTransition         = "transition.csv"
	csvMoments            = "moments.csv"
	csvBaselineStates     = "baseline_states.csv"
	csvBaselineTransition = "baseline_transition.csv"
)

func (x *setExport) openTables(h formats.Header) error {
	levels := make([]string, h.Dim)
	for k := range levels {
		levels[k] = formats.LevelColumn(k)
	}
	params := make([]string, len(h.Params))
	for k, p := range h.Params {
		params[k] = formats.ParamColumn(p)
	}
	cat := func(parts ...[]string) []string {
		var out []string
		for _, p := range parts {
			out = append(out, p...)
		}
		return out
	}
	moments := []string{"chain_mean", "chain_variance", "chain_skewness", "chain_kurtosis",
		"true_mean", "true_variance", "true_skewness", "true_kurtosis"}
	specs := []struct {
		name   string
		keys   []string
		prefix string
	}{
		{csvPoints, cat([]string{"point", "ages", "spec_hash", "chain_hash"}, params), ""},
		{csvStates, cat([]string{"point", "age", "state"}, levels, []string{"stationary", "initial", "matched"}), ""},
		{csvTransition, []string{"point", "age", "from_state"}, "to"},
		{csvMoments, cat([]string{"point", "age", "baseline", "state", "matched"}, moments), ""},
		{csvBaselineStates, cat([]string{"point", "age", "state"}, levels, []string{"stationary"}), ""},
		{csvBaselineTransition, []string{"point", "age", "from_state"}, "to"},
	}
	for _, s := range specs {
		t, err := newWideCSV(s.name, x.stage, s.keys, s.prefix)
		if err != nil {
			return err
		}
		x.tables = append(x.tables, t)
		x.byName[s.name] = t
	}
	return nil
}

func sortedTableNames(m map[string]*wideCSV) []string {
	out := make([]string, 0, len(m))
	for k := range m {
		out = append(out, k)
	}
	sort.Strings(out)
	return out
}

// point writes one sweep point: its .npz and .mat files and its CSV rows.
func (x *setExport) point(p *Point) error {
	first := p.Records[0]
	pd := pointDoc{Point: first.Point, Ages: len(p.Records), SpecHash: first.SpecHash, ChainHash: p.ChainHash, Params: p.ParamValues()}
	if x.kinds[Npz] || x.kinds[Mat] {
		arrays, err := p.Arrays(x.hashes)
		if err != nil {
			return err
		}
		stem := fmt.Sprintf("point-%0*d", x.width, first.Point)
		for _, k := range []string{Npz, Mat} {
			if !x.kinds[k] {
				continue
			}
			var buf bytes.Buffer
			if k == Npz {
				err = WriteNpz(&buf, arrays)
			} else {
				err = WriteMat(&buf, arrays)
			}
			if err != nil {
				return err
			}
			name := stem + "." + k
			if err := x.writeFile(name, buf.Bytes()); err != nil {
				return err
			}
			pd.Files = append(pd.Files, name)
		}
	}
	x.doc.Points = append(x.doc.Points, pd)
	if x.kinds[CSV] {
		return x.csvRows(p)
	}
	return nil
}

func (x *setExport) csvRows(p *Point) error {
	first := p.Records[0]
	pt := strconv.Itoa(first.Point)
	row := []string{pt, strconv.Itoa(len(p.Records)), first.SpecHash, p.ChainHash}
	for _, v := range p.ParamValues() {
		row = append(row, cell(v))
	}
	if err := x.byName[csvPoints].add(row, nil); err != nil {
		return err
	}
	opt := func(v []float64, i int) string {
		if v == nil {
			return ""
		}
		return cell(v[i])
	}
	for _, r := range p.Records {
		age := strconv.Itoa(r.Age)
		c := r.Chain
		n := c.States()
		for i := 0; i < n; i++ {
			row := []string{pt, age, strconv.Itoa(i)}
			for _, v := range c.State(i) {
				row = append(row, cell(v))
			}
			row = append(row, opt(r.Diag.Stationary, i), opt(r.Initial, i), strconv.Itoa(c.Matched[i]))
			if err := x.byName[csvStates].add(row, nil); err != nil {
				return err
			}
		}
		if c.Transition == nil {
			continue
		}
		if err := addMatrix(x.byName[csvTransition], pt, age, c.Transition, n); err != nil {
			return err
		}
		if err := addMoments(x.byName[csvMoments], pt, age, "false", r.Diag.States); err != nil {
			return err
		}
		if r.Baseline == nil {
			continue
		}
		b := r.Baseline
		for i, s := range b.States {
			row := []string{pt, age, strconv.Itoa(i)}
			for _, v := range s.Level {
				row = append(row, cell(v))
			}
			row = append(row, opt(b.Stationary, i))
			if err := x.byName[csvBaselineStates].add(row, nil); err != nil {
				return err
			}
		}
		if err := addMatrix(x.byName[csvBaselineTransition], pt, age, r.BaselineTransition, len(b.States)); err != nil {
			return err
		}
		if err := addMoments(x.byName[csvMoments], pt, age, "true", b.States); err != nil {
			return err
		}
	}
	return nil
}

func addMatrix(t *wideCSV, pt, age string, m []float64, n int) error {
	vals := make([]string, n)
	for i := 0; i < n; i++ {
		for j := range vals {
			vals[j] = cell(m[i*n+j])
		}
		if err := t.add([]string{pt, age, strconv.Itoa(i)}, vals); err != nil {
			return err
		}
	}
	return nil
}

func addMoments(t *wideCSV, pt, age, baseline string, states []solver.StateCheck) error {
	for i, s := range states {
		row := []string{pt, age, baseline, strconv.Itoa(i), strconv.Itoa(s.Matched),
			cell(s.Chain.Mean), cell(s.Chain.Var), cell(s.Chain.Skew), cell(s.Chain.Kurt),
			cell(s.True.Mean), cell(s.True.Var), cell(s.True.Skew), cell(s.True.Kurt)}
		if err := t.add(row, nil); err != nil {
			return err
		}
	}
	return nil
}

// writeFile writes a finished file into the staging folder and records
// its SHA-256 in the sidecar.
func (x *setExport) writeFile(name string, data []byte) error {
	return x.file(name, func(w io.Writer) error {
		_, err := w.Write(data)
		return err
	})
}

// file creates name in the staging folder with what fill writes, syncs
// it, and records its SHA-256 (except for the sidecar itself).
func (x *setExport) file(name string, fill func(io.Writer) error) error {
	f, err := os.OpenFile(filepath.Join(x.stage, name), os.O_CREATE|os.O_EXCL|os.O_WRONLY, 0o644)
	if err != nil {
		return err
	}
	h := sha256.New()
	if err := fill(io.MultiWriter(f, h)); err != nil {
		f.Close()
		return err
	}
	if err := f.Sync(); err != nil {
		f.Close()
		return err
	}
	if err := f.Close(); err != nil {
		return err
	}
	if name != ProvenanceFile {
		x.doc.Files[name] = hex.EncodeToString(h.Sum(nil))
	}
	x.written++
	return nil
}

// replaceDir renames the finished staging folder to final, replacing an
// earlier folder there: the old one is first moved aside under a hidden
// name and removed once the new one is in place, so that final never
// holds a mix of the two or a partly written export.
func replaceDir(stage, final string) error {
	dir := filepath.Dir(final)
	var old string
	if _, err := os.Lstat(final); err == nil {
		aside, err := os.MkdirTemp(dir, "."+filepath.Base(final)+".old-")
		if err != nil {
			return err
		}
		old = filepath.Join(aside, "x")
		if err := os.Rename(final, old); err != nil {
			os.Remove(aside)
			return err
		}
		defer os.RemoveAll(aside)
	} else if !errors.Is(err, os.ErrNotExist) {
		return err
	}
	if err := os.Rename(stage, final); err != nil {
		if old != "" {
			os.Rename(old, final)
		}
		return err
	}
	if d, err := os.Open(dir); err == nil {
		d.Sync()
		d.Close()
	}
	return nil
}
