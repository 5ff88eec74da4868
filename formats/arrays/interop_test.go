package arrays

import (
	"context"
	"encoding/json"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"reflect"
	"sort"
	"strings"
	"testing"

	"gridstage/batch"
	"gridstage/internal/pyref"
	"gridstage/manifests"
)

// exportManifest is an invented study with one process of each shape an
// export must lay out: an AR(1) swept over persistence and the number of
// states (so the wide CSV pads shorter rows) with a Tauchen chain beside
// it, a life cycle of four transitions (stacked matrices, an initial
// distribution, Rouwenhorst beside it) and a two-dimensional VAR (grids of
// two columns, Tauchen beside it).
const exportManifest = `run: export-check
processes:
  - name: income
    kind: ar1
    sigma: 0.1
    compare: tauchen
    sweep:
      vary:
        rho: [0.5, 0.95]
        states: [5, 7]
  - name: career
    kind: lifecycle
    rho: [0.9, 0.93, 0.96, 1]
    sigma: [0.2, 0.18, 0.16, 0.15]
    initial_sd: 0.3
    states: 5
  - name: plant
    kind: var
    coef: [[0.9, 0.05], [0.02, 0.8]]
    cov: [[0.01, 0.002], [0.002, 0.02]]
    states: 3
`

// nodeScript locates tools/interop/arrays.mjs and its packages; as in the
// formats interop test, a missing node or package skips the test except
// under CI=true, where .ci/run installs them.
func nodeScript(t *testing.T) (node, script string) {
	t.Helper()
	script, _ = filepath.Abs(filepath.Join("..", "..", "tools", "interop", "arrays.mjs"))
	missing := func(what string) {
		msg := "the export interoperability check needs " + what + " (install with: cd tools/interop && npm ci)"
		if os.Getenv("CI") == "true" {
			t.Fatal(msg)
		}
		t.Skip(msg)
	}
	node, err := exec.LookPath("node")
	if err != nil {
		missing("node on the PATH")
	}
	if _, err := os.Stat(filepath.Join(filepath.Dir(script), "node_modules", "@duckdb", "node-api", "package.json")); err != nil {
		missing("the npm package @duckdb/node-api")
	}
	return node, script
}

// duckChain is one (point, age) as DuckDB read it; floats are bit
// patterns in hex, nulls are null.
type duckChain struct {
	Grid, Transition, Stationary, Initial []*string
	Matched                               []float64
	Bgrid, Btransition, Bstationary       []*string
	Mchain, Mtrue, Bmchain, Bmtrue        []*string
}

type duckPoint struct {
	Point     int               `json:"point"`
	Ages      int               `json:"ages"`
	SpecHash  string            `json:"spec_hash"`
	ChainHash string            `json:"chain_hash"`
	Params    map[string]string `json:"params"`
}

type duckSource struct {
	Points []duckPoint
	Chains map[string]*duckChain
}

// dumpArrays reads every .npz with numpy.load and every .mat with
// scipy.io.loadmat under the given folders (as readWithNumpyScipy).
const dumpArrays = `
import glob, os, struct
import scipy.io
def describe(a):
    a = np.asarray(a)
    d = {"shape": list(a.shape), "kind": a.dtype.kind, "bits": [], "ints": [], "text": []}
    flat = a.reshape(-1)
    if a.dtype.kind == "f":
        d["bits"] = ["%016x" % struct.unpack("<Q", struct.pack("<d", float(v)))[0] for v in flat]
    elif a.dtype.kind in "iu":
        d["ints"] = [int(v) for v in flat]
    else:
        d["text"] = [str(v) for v in flat]
    return d
out = {}
for folder in data:
    for path in sorted(glob.glob(os.path.join(folder, "point-*.npz"))):
        with np.load(path, allow_pickle=False) as z:
            out[path] = {k: describe(z[k]) for k in z.files}
    for path in sorted(glob.glob(os.path.join(folder, "point-*.mat"))):
        m = scipy.io.loadmat(path)
        out[path] = {k: describe(v) for k, v in m.items() if not k.startswith("__")}
print(json.dumps(out))
`

// TestExportReadByNumpyScipyDuckDB runs exportManifest, exports it, and
// reads everything back with readers that share no code with gridstage:
// DuckDB reads the Parquet tables and the CSV tables, numpy.load every
// .npz and scipy.io.loadmat every .mat. Every grid, transition matrix,
// stationary and initial distribution, matched count, conditional moment,
// baseline chain, swept value and hash must be the same in all four, bit
// for bit: the exports copy float64 values, so nothing may change.
func TestExportReadByNumpyScipyDuckDB(t *testing.T) {
	node, script := nodeScript(t)
	m, err := manifests.Parse(strings.NewReader(exportManifest), "export.yaml", t.TempDir())
	if err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(t.TempDir(), "run")
	if _, err := batch.Run(context.Background(), m, batch.Options{Out: out}); err != nil {
		t.Fatal(err)
	}
	exp := filepath.Join(out, "arrays")
	written, err := Export(out, exp, Options{})
	if err != nil {
		t.Fatal(err)
	}
	processes := []string{"career", "income", "plant"}
	var folders []string
	for i, w := range written {
		if w.Process != processes[i] {
			t.Fatalf("export %d is of %s, want %s", i, w.Process, processes[i])
		}
		folders = append(folders, w.Dir)
	}

	cmd := exec.Command(node, append([]string{script, out, exp}, processes...)...)
	cmd.Stderr = os.Stderr
	raw, err := cmd.Output()
	if err != nil {
		t.Fatalf("tools/interop/arrays.mjs: %v", err)
	}
	var duck map[string]struct {
		Dim     int
		Parquet duckSource
		CSV     duckSource
	}
	if err := json.Unmarshal(raw, &duck); err != nil {
		t.Fatalf("tools/interop/arrays.mjs printed %.200s: %v", raw, err)
	}
	var py map[string]map[string]readBack
	pyref.Eval(t, folders, dumpArrays, &py, "scipy.io")

	for _, process := range processes {
		d := duck[process]
		if !reflect.DeepEqual(d.Parquet.Points, d.CSV.Points) {
			t.Errorf("%s: points.csv differs from the points table:\n csv     %+v\n parquet %+v", process, d.CSV.Points, d.Parquet.Points)
		}
		if len(d.Parquet.Chains) == 0 || !reflect.DeepEqual(d.Parquet.Chains, d.CSV.Chains) {
			for key, c := range d.Parquet.Chains {
				if !reflect.DeepEqual(c, d.CSV.Chains[key]) {
					t.Errorf("%s %s: the CSV tables differ from the Parquet tables:\n csv     %+v\n parquet %+v", process, key, d.CSV.Chains[key], c)
				}
			}
			t.Errorf("%s: %d chains in Parquet, %d in CSV", process, len(d.Parquet.Chains), len(d.CSV.Chains))
		}
		for _, p := range d.Parquet.Points {
			want := expectedArrays(t, d.Dim, p, d.Parquet.Chains)
			stem := filepath.Join(exp, process, fmt.Sprintf("point-%0*d", len(fmt.Sprint(len(d.Parquet.Points)-1)), p.Point))
			for _, ext := range []string{".npz", ".mat"} {
				got, ok := py[stem+ext]
				if !ok {
					t.Errorf("%s%s was not read", stem, ext)
					continue
				}
				compareArrays(t, stem+ext, ext == ".mat", got, want)
			}
		}
	}
}

// wantArray is an array as the Parquet tables say it should be exported.
type wantArray struct {
	shape []int
	bits  []string
	ints  []int64
	text  []string
}

// expectedArrays lays out one point from the Parquet values as
// docs/FORMATS.md ("Arrays for other languages") documents.
func expectedArrays(t *testing.T, dim int, p duckPoint, chains map[string]*duckChain) map[string]wantArray {
	t.Helper()
	strs := func(v []*string) []string {
		out := make([]string, len(v))
		for i, s := range v {
			if s == nil {
				t.Fatalf("point %d: a null where a number was expected", p.Point)
			}
			out[i] = *s
		}
		return out
	}
	allNull := func(v []*string) bool {
		for _, s := range v {
			if s != nil {
				return false
			}
		}
		return true
	}
	age := func(a int) *duckChain { return chains[fmt.Sprintf("%d/%d", p.Point, a)] }
	life := p.Ages > 1
	first := age(0)
	n := len(first.Matched)
	trans := 1
	if life {
		trans = p.Ages - 1
	}
	stack := func(inner ...int) []int {
		if life {
			return append([]int{trans}, inner...)
		}
		return inner
	}
	w := map[string]wantArray{}
	var grid, tr, mc, mt, bg, bt, bmc, bmt []string
	var matched []int64
	for a := 0; a < p.Ages; a++ {
		c := age(a)
		grid = append(grid, strs(c.Grid)...)
		for _, m := range c.Matched {
			matched = append(matched, int64(m))
		}
		if a < trans {
			tr = append(tr, strs(c.Transition)...)
			mc, mt = append(mc, strs(c.Mchain)...), append(mt, strs(c.Mtrue)...)
			bg, bt = append(bg, strs(c.Bgrid)...), append(bt, strs(c.Btransition)...)
			bmc, bmt = append(bmc, strs(c.Bmchain)...), append(bmt, strs(c.Bmtrue)...)
		}
	}
	if life {
		w["grid"] = wantArray{shape: []int{p.Ages, n, dim}, bits: grid}
		w["matched"] = wantArray{shape: []int{p.Ages, n}, ints: matched}
	} else {
		w["grid"] = wantArray{shape: []int{n, dim}, bits: grid}
		w["matched"] = wantArray{shape: []int{n}, ints: matched}
	}
	w["transition"] = wantArray{shape: stack(n, n), bits: tr}
	w["moments_chain"] = wantArray{shape: stack(n, 4), bits: mc}
	w["moments_true"] = wantArray{shape: stack(n, 4), bits: mt}
	if !life && !allNull(first.Stationary) {
		w["stationary"] = wantArray{shape: []int{n}, bits: strs(first.Stationary)}
	}
	if !allNull(first.Initial) {
		w["initial"] = wantArray{shape: []int{n}, bits: strs(first.Initial)}
	}
	if nb := len(first.Bstationary); nb > 0 {
		w["baseline_grid"] = wantArray{shape: stack(nb, dim), bits: bg}
		w["baseline_transition"] = wantArray{shape: stack(nb, nb), bits: bt}
		w["baseline_moments_chain"] = wantArray{shape: stack(nb, 4), bits: bmc}
		w["baseline_moments_true"] = wantArray{shape: stack(nb, 4), bits: bmt}
		if !life && !allNull(first.Bstationary) {
			w["baseline_stationary"] = wantArray{shape: []int{nb}, bits: strs(first.Bstationary)}
		}
	}
	names := make([]string, 0, len(p.Params))
	for k := range p.Params {
		names = append(names, k)
	}
	sort.Strings(names)
	var values []string
	for _, k := range names {
		values = append(values, p.Params[k])
	}
	w["param_values"] = wantArray{shape: []int{len(names)}, bits: values}
	w["param_names"] = wantArray{shape: []int{len(names)}, text: names}
	w["point"] = wantArray{shape: []int{}, ints: []int64{int64(p.Point)}}
	w["spec_hash"] = wantArray{shape: []int{}, text: []string{p.SpecHash}}
	w["chain_hash"] = wantArray{shape: []int{}, text: []string{p.ChainHash}}
	return w
}

// compareArrays checks a file's arrays against the expected ones. For a
// MAT-file, shapes follow MATLAB's rules (a vector is a column, a scalar
// 1×1, a list of strings one padded row each).
func compareArrays(t *testing.T, path string, mat bool, got map[string]readBack, want map[string]wantArray) {
	t.Helper()
	for name, w := range want {
		g, ok := got[name]
		if !ok {
			t.Errorf("%s: no array %s", path, name)
			continue
		}
		shape := nonNil(w.shape)
		if mat {
			switch {
			case w.text != nil && len(w.shape) == 0:
				shape = []int{1}
			case w.text != nil && len(w.text) == 0:
				shape = []int{0}
			case w.text != nil:
			case len(shape) == 0:
				shape = []int{1, 1}
			case len(shape) == 1:
				shape = []int{shape[0], 1}
			}
		}
		if !equalInts(g.Shape, shape) {
			t.Errorf("%s: %s has shape %v, want %v", path, name, g.Shape, shape)
		}
		switch {
		case w.ints != nil:
			if !equalInt64s(g.Ints, w.ints) {
				t.Errorf("%s: %s is %v, want %v", path, name, g.Ints, w.ints)
			}
		case w.text != nil:
			text := g.Text
			if mat {
				for i := range text {
					text[i] = strings.TrimRight(text[i], " ")
				}
			}
			if !equalStrings(text, w.text) {
				t.Errorf("%s: %s is %q, want %q", path, name, text, w.text)
			}
		default:
			if !equalStrings(g.Bits, nonNilStrings(w.bits)) {
				t.Errorf("%s: %s differs from the Parquet values:\n got  %v\n want %v", path, name, g.Bits, w.bits)
			}
		}
	}
	for name := range got {
		if _, ok := want[name]; !ok && !knownExtra[name] {
			t.Errorf("%s: unexpected array %s", path, name)
		}
	}
}

// knownExtra are the arrays the test does not derive from Parquet values:
// text the tables hold as metadata.
var knownExtra = map[string]bool{"moment_names": true, "baseline_method": true, "process": true, "kind": true, "method": true,
	"spec": true, "numeric_version": true, "tool_version": true, "content_hashes": true}

func nonNilStrings(v []string) []string {
	if v == nil {
		return []string{}
	}
	return v
}
