package batch

import (
	"bufio"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"flag"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"regexp"
	"sort"
	"strconv"
	"strings"
	"testing"

	"gridstage/internal/version"
	"gridstage/manifests"
)

// The golden numbers of testdata/numerics: the guarantee of docs/HASHES.md
// ("Numeric version") that the same spec under the same numeric version
// gives the same numbers, checked on a fixed set of specs. The test reads
// only testdata and needs neither Python nor the network, so the same test
// binary runs under another architecture unchanged:
//
//	GOARCH=arm64 go test -c -o /tmp/batch-arm64.test ./batch
//	cd batch && qemu-aarch64-static /tmp/batch-arm64.test -test.run 'TestNumericsGolden$'

var updateNumerics = flag.Bool("update", false, "record the golden numbers of testdata/numerics (refused when numbers changed and internal/version.Numeric was not bumped)")

const (
	numericsDir   = "../testdata/numerics"
	numericsSpecs = numericsDir + "/specs.yaml"
	numericsFile  = numericsDir + "/chains.txt"
	numericsVals  = numericsDir + "/values"
	updateCommand = "go test ./batch -run 'TestNumericsGolden$' -update"
)

// goldenEntry is one process of the golden file.
type goldenEntry struct {
	chain  string // chain hash (docs/HASHES.md), over the chain's numbers
	digest string // SHA-256 over every number of the solved job (flatten)
}

type golden struct {
	numeric string
	entries map[string]goldenEntry
	order   []string
}

func TestNumericsGolden(t *testing.T) {
	m, err := manifests.Load(numericsSpecs)
	if err != nil {
		t.Fatal(err)
	}
	now := golden{numeric: version.Numeric, entries: map[string]goldenEntry{}}
	values := map[string]map[string]any{}
	for _, job := range m.Jobs {
		if job.Point != 0 {
			t.Fatalf("%s: process %s has a sweep; golden specs have one point each", numericsSpecs, job.Process)
		}
		prob, err := job.Build()
		if err != nil {
			t.Fatal(err)
		}
		sol, err := prob.Solve()
		if err != nil {
			t.Fatalf("%s: %v", job.Process, err)
		}
		flat := map[string]any{}
		flatten(flat, "", reflect.ValueOf(sol))
		now.entries[job.Process] = goldenEntry{chain: ChainHash(job, sol), digest: digest(flat)}
		now.order = append(now.order, job.Process)
		values[job.Process] = flat
	}

	old, err := readGolden(numericsFile)
	if err != nil && !(os.IsNotExist(err) && *updateNumerics) {
		t.Fatalf("%v\nRecord the golden numbers with: %s", err, updateCommand)
	}
	var changed, added, removed []string
	for _, name := range now.order {
		o, ok := old.entries[name]
		switch {
		case !ok:
			added = append(added, name)
		case o != now.entries[name]:
			changed = append(changed, name)
		}
	}
	for _, name := range old.order {
		if _, ok := now.entries[name]; !ok {
			removed = append(removed, name)
		}
	}
	bumped := old.numeric != version.Numeric

	if len(changed) > 0 && !bumped {
		t.Fatal(unbumpedMessage(old, now, changed, values))
	}
	if *updateNumerics {
		if err := writeGolden(now, values); err != nil {
			t.Fatal(err)
		}
		t.Logf("recorded %d golden specs under numeric version %s (%d changed, %d new, %d removed)",
			len(now.order), now.numeric, len(changed), len(added), len(removed))
		return
	}
	var msg strings.Builder
	if bumped {
		fmt.Fprintf(&msg, "internal/version.Numeric is %s but %s records numeric version %s", version.Numeric, numericsFile, old.numeric)
		if len(changed) > 0 {
			fmt.Fprintf(&msg, "; %d specs changed their numbers:\n%s", len(changed), describeChanges(old, now, changed, values))
		} else {
			msg.WriteString(" (no golden spec changed its numbers)\n")
		}
		fmt.Fprintf(&msg, "Record the numbers of version %s: %s\n", version.Numeric, updateCommand)
	}
	if len(added) > 0 {
		fmt.Fprintf(&msg, "%s has specs without golden numbers: %s\nRecord them (new specs need no bump): %s\n",
			numericsSpecs, strings.Join(added, ", "), updateCommand)
	}
	if len(removed) > 0 {
		fmt.Fprintf(&msg, "%s no longer has golden specs %s; existing specs are the record and stay.\nIf the removal is meant, record it: %s\n",
			numericsSpecs, strings.Join(removed, ", "), updateCommand)
	}
	if msg.Len() > 0 {
		t.Fatal(msg.String())
	}
}

// unbumpedMessage tells a developer whose change moved numbers what to do.
func unbumpedMessage(old, now golden, changed []string, values map[string]map[string]any) string {
	next := "a new value"
	if n, err := strconv.Atoi(old.numeric); err == nil {
		next = strconv.Itoa(n + 1)
	}
	var b strings.Builder
	fmt.Fprintf(&b, "numbers changed without a numeric version bump: %d of %d golden specs (%s) solve differently under numeric version %s:\n%s",
		len(changed), len(now.order), numericsSpecs, old.numeric, describeChanges(old, now, changed, values))
	fmt.Fprintf(&b, `
Any change that alters a number of a chain or its diagnostics must bump the
numeric version, so that the cache, merge and the lineage ledger never mix
numbers of two builds under one spec hash (docs/HASHES.md). If the change is
meant:
  1. set Numeric in internal/version/version.go to %q (one past the %q this
     file records; after a rebase onto a main that bumped too, this is
     already one past main's);
  2. run: %s
  3. commit testdata/numerics with your change and say in the commit message
     by how much numbers moved (the largest changes are listed above).
If it is not meant, the change has a bug: the specs above show where.
On a rebase conflict in testdata/numerics: keep main's side of the
conflicting files (during "git rebase main" that is "--ours":
git checkout --ours testdata/numerics), then do steps 1 and 2.`, next, old.numeric, updateCommand)
	return b.String()
}

// describeChanges lists each changed spec with its largest moves.
func describeChanges(old, now golden, changed []string, values map[string]map[string]any) string {
	var b strings.Builder
	for _, name := range changed {
		o, n := old.entries[name], now.entries[name]
		what := "chain hash " + short(o.chain) + " → " + short(n.chain)
		if o.chain == n.chain {
			what = "same chain, other diagnostics or baseline"
		}
		fmt.Fprintf(&b, "  %s: %s; %s\n", name, what, moves(name, values[name]))
	}
	return b.String()
}

// moves summarises how the numbers of one spec moved against the recorded
// values file: the largest absolute change per kind of value.
func moves(name string, now map[string]any) string {
	before, err := readValues(name)
	if err != nil {
		return "no recorded values to compare (" + err.Error() + ")"
	}
	type move struct {
		group string
		delta float64
		count int
	}
	groups := map[string]*move{}
	other := 0
	for path, v := range now {
		w, ok := before[path]
		if !ok {
			other++
			continue
		}
		if reflect.DeepEqual(v, w) {
			continue
		}
		x, okx := v.(float64)
		y, oky := w.(float64)
		if !okx || !oky {
			other++
			continue
		}
		g := indexRE.ReplaceAllString(path, "[]")
		if groups[g] == nil {
			groups[g] = &move{group: g}
		}
		groups[g].count++
		groups[g].delta = math.Max(groups[g].delta, math.Abs(x-y))
	}
	for path := range before {
		if _, ok := now[path]; !ok {
			other++
		}
	}
	// Lead with the chains themselves, then the largest moves by kind.
	var parts []string
	for _, part := range []struct{ label, prefix string }{{"chain", "Chain."}, {"chain", "Ages."}, {"baseline chain", "Baseline."}, {"baseline chain", "BaselineAges."}} {
		var d float64
		var n int
		for g, m := range groups {
			if strings.HasPrefix(g, part.prefix) {
				d, n = math.Max(d, m.delta), n+m.count
			}
		}
		if n > 0 {
			parts = append(parts, fmt.Sprintf("%s values moved by up to %.3g (%d values)", part.label, d, n))
		}
	}
	list := make([]*move, 0, len(groups))
	for _, m := range groups {
		list = append(list, m)
	}
	sort.Slice(list, func(i, j int) bool {
		if list[i].delta != list[j].delta {
			return list[i].delta > list[j].delta
		}
		return list[i].group < list[j].group
	})
	var largest []string
	for i, m := range list {
		if i == 3 {
			largest = append(largest, fmt.Sprintf("and %d more kinds of values", len(list)-i))
			break
		}
		largest = append(largest, fmt.Sprintf("%s by %.3g", m.group, m.delta))
	}
	if len(largest) > 0 {
		parts = append(parts, "largest moves: "+strings.Join(largest, ", "))
	}
	if other > 0 {
		parts = append(parts, fmt.Sprintf("%d values added, removed or not numbers", other))
	}
	if len(parts) == 0 {
		return "every recorded value equal (the values file is out of date)"
	}
	return strings.Join(parts, "; ")
}

var indexRE = regexp.MustCompile(`\[\d+\]`)

func short(h string) string {
	if len(h) > 12 {
		return h[:12]
	}
	return h
}

// flatten records every number, bool and string reachable from v under a
// path of field names and indices (nil pointers and empty slices add
// nothing). Floats keep their exact value; non-finite ones become the
// strings "NaN", "+Inf", "-Inf".
func flatten(out map[string]any, path string, v reflect.Value) {
	switch v.Kind() {
	case reflect.Pointer, reflect.Interface:
		if !v.IsNil() {
			flatten(out, path, v.Elem())
		}
	case reflect.Struct:
		for i := 0; i < v.NumField(); i++ {
			if f := v.Type().Field(i); f.IsExported() {
				flatten(out, join(path, f.Name), v.Field(i))
			}
		}
	case reflect.Slice, reflect.Array:
		for i := 0; i < v.Len(); i++ {
			flatten(out, fmt.Sprintf("%s[%d]", path, i), v.Index(i))
		}
	case reflect.Map:
		keys := v.MapKeys()
		for _, k := range keys {
			flatten(out, join(path, fmt.Sprint(k.Interface())), v.MapIndex(k))
		}
	case reflect.Float32, reflect.Float64:
		x := v.Float()
		switch {
		case math.IsNaN(x):
			out[path] = "NaN"
		case math.IsInf(x, 1):
			out[path] = "+Inf"
		case math.IsInf(x, -1):
			out[path] = "-Inf"
		default:
			out[path] = x
		}
	case reflect.Int, reflect.Int8, reflect.Int16, reflect.Int32, reflect.Int64:
		out[path] = float64(v.Int())
	case reflect.Uint, reflect.Uint8, reflect.Uint16, reflect.Uint32, reflect.Uint64:
		out[path] = float64(v.Uint())
	case reflect.Bool:
		out[path] = v.Bool()
	case reflect.String:
		out[path] = v.String()
	}
}

func join(path, name string) string {
	if path == "" {
		return name
	}
	return path + "." + name
}

// digest is SHA-256 over the flattened values in path order, floats by
// their bits, so that any change of any number changes it.
func digest(flat map[string]any) string {
	keys := make([]string, 0, len(flat))
	for k := range flat {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	h := sha256.New()
	for _, k := range keys {
		switch x := flat[k].(type) {
		case float64:
			fmt.Fprintf(h, "%s=%016x\n", k, math.Float64bits(x))
		default:
			fmt.Fprintf(h, "%s=%v\n", k, x)
		}
	}
	return hex.EncodeToString(h.Sum(nil))
}

const goldenHeader = `# Golden numbers of testdata/numerics/specs.yaml (docs/HASHES.md, "Numeric
# version"). Written by: go test ./batch -run 'TestNumericsGolden$' -update
# which refuses to record changed numbers unless internal/version.Numeric
# was bumped. One line per process: name, chain hash, digest of every
# number of the solved job (chain, baseline chain, diagnostics).
`

func readGolden(path string) (golden, error) {
	g := golden{entries: map[string]goldenEntry{}}
	f, err := os.Open(path)
	if err != nil {
		return g, err
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	line := 0
	for sc.Scan() {
		line++
		text := strings.TrimSpace(sc.Text())
		if text == "" || strings.HasPrefix(text, "#") {
			continue
		}
		fields := strings.Fields(text)
		switch {
		case fields[0] == "numeric" && len(fields) == 2 && g.numeric == "":
			g.numeric = fields[1]
		case len(fields) == 3 && g.numeric != "":
			if _, dup := g.entries[fields[0]]; dup {
				return g, fmt.Errorf("%s:%d: process %s twice", path, line, fields[0])
			}
			g.entries[fields[0]] = goldenEntry{chain: fields[1], digest: fields[2]}
			g.order = append(g.order, fields[0])
		default:
			return g, fmt.Errorf("%s:%d: want \"numeric N\" first, then \"process chain-hash digest\" lines", path, line)
		}
	}
	if err := sc.Err(); err != nil {
		return g, err
	}
	if g.numeric == "" {
		return g, fmt.Errorf("%s: no numeric version line", path)
	}
	return g, nil
}

func writeGolden(g golden, values map[string]map[string]any) error {
	var b strings.Builder
	b.WriteString(goldenHeader)
	fmt.Fprintf(&b, "numeric %s\n", g.numeric)
	for _, name := range g.order {
		e := g.entries[name]
		fmt.Fprintf(&b, "%s %s %s\n", name, e.chain, e.digest)
	}
	if err := os.WriteFile(numericsFile, []byte(b.String()), 0o644); err != nil {
		return err
	}
	if err := os.RemoveAll(numericsVals); err != nil {
		return err
	}
	if err := os.MkdirAll(numericsVals, 0o755); err != nil {
		return err
	}
	for name, flat := range values {
		j, err := json.MarshalIndent(flat, "", " ")
		if err != nil {
			return err
		}
		if err := os.WriteFile(filepath.Join(numericsVals, name+".json"), append(j, '\n'), 0o644); err != nil {
			return err
		}
	}
	return nil
}

func readValues(name string) (map[string]any, error) {
	b, err := os.ReadFile(filepath.Join(numericsVals, name+".json"))
	if err != nil {
		return nil, err
	}
	var m map[string]any
	return m, json.Unmarshal(b, &m)
}
