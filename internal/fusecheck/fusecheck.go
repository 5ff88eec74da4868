// Package fusecheck finds floating-point products that a Go compiler may
// fuse with an addition or subtraction into one fused multiply-add.
//
// The Go specification lets an implementation compute x*y + z with a single
// rounding ("An implementation may combine multiple floating-point
// operations into a single fused operation, possibly across statements");
// the gc compiler does so on arm64, ppc64, s390x and riscv64 but not on
// amd64, so the same source gives different last bits on different
// machines. An explicit conversion rounds and stops the fusion:
// float64(x*y) + z is the same on every machine.
//
// The rule checked here is deliberately simple and conservative: a float
// product may stand bare only as an operand of another * or /, as an
// operand of a comparison, or directly inside a float conversion.
// Everywhere else (an operand of + or -, an assignment, a return value, a
// function argument, a composite literal, x *= y) it must be wrapped,
// because the compiler fuses across statements and inlined calls too: a
// product assigned to a variable or returned from an inlined function can
// meet its addition later.
package fusecheck

import (
	"bytes"
	"fmt"
	"go/ast"
	"go/importer"
	"go/parser"
	"go/token"
	"go/types"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"sort"
	"strings"
)

// Finding is one product that may be fused.
type Finding struct {
	Pos  token.Position
	Expr string // the product as written, or the x *= y statement
	// edit rewrites the source: wrap [start,end) in float64(...), or
	// replace an x *= y statement.
	start, end int
	replace    string
	math       bool // a call of a math function that is not exact
	imported   bool // an import of library code not known to be portable
}

// AllowedImports lists the packages from outside the standard library and
// this module that the hash path may import, each with the reason it
// cannot change a chain's numbers.
var AllowedImports = map[string]string{
	// solver/var.go: spectralRadius decides only whether a VAR spec is
	// accepted; no number of a chain comes from it (docs/HASHES.md).
	"gonum.org/v1/gonum/mat": "VAR stationarity check only",
	// manifests: parsers, no arithmetic on the numbers they read.
	"go.yaml.in/yaml/v3":                             "reads manifests; decimal numbers through strconv.ParseFloat, correctly rounded",
	"github.com/apache/arrow-go/v18/arrow":           "reads Parquet draw tables; float64 values copied bit for bit",
	"github.com/apache/arrow-go/v18/arrow/array":     "reads Parquet draw tables; float64 values copied bit for bit",
	"github.com/apache/arrow-go/v18/arrow/memory":    "reads Parquet draw tables; float64 values copied bit for bit",
	"github.com/apache/arrow-go/v18/parquet/file":    "reads Parquet draw tables; float64 values copied bit for bit",
	"github.com/apache/arrow-go/v18/parquet/pqarrow": "reads Parquet draw tables; float64 values copied bit for bit",
}

// portableImport reports whether the hash path may import path: the
// standard library (whose math functions are checked call by call), this
// module, or AllowedImports.
func portableImport(path string) bool {
	first, _, _ := strings.Cut(path, "/")
	return !strings.Contains(first, ".") || first == "gridstage" || AllowedImports[path] != ""
}

// exactMath lists the functions of package math whose results are the same
// on every machine: exact operations (IEEE 754 requires Sqrt to be
// correctly rounded; the others return a representable result exactly or
// only move bits). Every other math function is either assembly on amd64
// or arm64 (Exp, Log, Hypot, Exp2) or Go code that the arm64 compiler
// fuses differently (Erfc, Pow, Sin, ...): the hash path takes those from
// gridstage/internal/portablemath.
var exactMath = map[string]bool{
	"Abs": true, "Copysign": true, "Signbit": true, "Sqrt": true,
	"Floor": true, "Ceil": true, "Trunc": true, "Round": true, "RoundToEven": true,
	"Max": true, "Min": true, "Inf": true, "IsInf": true, "IsNaN": true, "NaN": true,
	"Float64bits": true, "Float64frombits": true, "Frexp": true, "Ldexp": true,
	"Modf": true, "Mod": true, "Nextafter": true, "FMA": true,
}

// Fixable reports whether Fix can rewrite the finding (a product; a math
// call must be replaced by hand).
func (f Finding) Fixable() bool { return !f.math && !f.imported }

func (f Finding) String() string {
	if f.math {
		return fmt.Sprintf("%s: %s differs between machines; use gridstage/internal/portablemath", f.Pos, f.Expr)
	}
	if f.imported {
		return fmt.Sprintf("%s: import %q is not known to compute the same on every machine; use portable code of this module (docs/HASHES.md)", f.Pos, f.Expr)
	}
	return fmt.Sprintf("%s: fusable product %s", f.Pos, f.Expr)
}

// Dir checks the non-test Go files of the package in dir.
func Dir(dir string) ([]Finding, error) {
	fset := token.NewFileSet()
	names, err := filepath.Glob(filepath.Join(dir, "*.go"))
	if err != nil {
		return nil, err
	}
	var files []*ast.File
	src := map[string][]byte{}
	for _, name := range names {
		if strings.HasSuffix(name, "_test.go") {
			continue
		}
		b, err := os.ReadFile(name)
		if err != nil {
			return nil, err
		}
		f, err := parser.ParseFile(fset, name, b, parser.ParseComments)
		if err != nil {
			return nil, err
		}
		files = append(files, f)
		src[name] = b
	}
	if len(files) == 0 {
		return nil, fmt.Errorf("fusecheck: no Go files in %s", dir)
	}
	info := &types.Info{Types: map[ast.Expr]types.TypeAndValue{}, Uses: map[*ast.Ident]types.Object{}}
	exports, err := exportData(dir)
	if err != nil {
		return nil, err
	}
	lookup := func(path string) (io.ReadCloser, error) {
		file, ok := exports[path]
		if !ok || file == "" {
			return nil, fmt.Errorf("fusecheck: no export data for %s", path)
		}
		return os.Open(file)
	}
	conf := types.Config{Importer: importer.ForCompiler(fset, "gc", lookup)}
	if _, err := conf.Check(files[0].Name.Name, fset, files, info); err != nil {
		return nil, fmt.Errorf("fusecheck: type-checking %s: %w", dir, err)
	}
	var out []Finding
	for _, f := range files {
		for _, imp := range f.Imports {
			path := strings.Trim(imp.Path.Value, `"`)
			if !portableImport(path) {
				out = append(out, Finding{Pos: fset.Position(imp.Pos()), Expr: path, imported: true})
			}
		}
		name := fset.File(f.Pos()).Name()
		out = append(out, fileFindings(fset, f, info, src[name])...)
	}
	sort.Slice(out, func(i, j int) bool {
		if out[i].Pos.Filename != out[j].Pos.Filename {
			return out[i].Pos.Filename < out[j].Pos.Filename
		}
		return out[i].Pos.Offset < out[j].Pos.Offset
	})
	return out, nil
}

// exportData maps the import path of every dependency of the package in
// dir to its compiled export data (go list -export builds what is missing).
func exportData(dir string) (map[string]string, error) {
	cmd := exec.Command("go", "list", "-export", "-deps", "-f", "{{.ImportPath}}\t{{.Export}}", ".")
	cmd.Dir = dir
	var stderr bytes.Buffer
	cmd.Stderr = &stderr
	out, err := cmd.Output()
	if err != nil {
		return nil, fmt.Errorf("fusecheck: go list -export in %s: %v\n%s", dir, err, stderr.String())
	}
	m := map[string]string{}
	for _, line := range strings.Split(strings.TrimSpace(string(out)), "\n") {
		if path, file, ok := strings.Cut(line, "\t"); ok {
			m[path] = file
		}
	}
	return m, nil
}

func isFloat(info *types.Info, e ast.Expr) bool {
	tv, ok := info.Types[e]
	if !ok || tv.Type == nil {
		return false
	}
	b, ok := tv.Type.Underlying().(*types.Basic)
	return ok && b.Info()&types.IsFloat != 0
}

func isConst(info *types.Info, e ast.Expr) bool {
	tv, ok := info.Types[e]
	return ok && tv.Value != nil
}

// fileFindings walks one file keeping the chain of parents.
func fileFindings(fset *token.FileSet, f *ast.File, info *types.Info, src []byte) []Finding {
	var out []Finding
	var stack []ast.Node
	text := func(n ast.Node) string {
		return string(src[fset.Position(n.Pos()).Offset:fset.Position(n.End()).Offset])
	}
	ast.Inspect(f, func(n ast.Node) bool {
		if n == nil {
			stack = stack[:len(stack)-1]
			return true
		}
		switch x := n.(type) {
		case *ast.BinaryExpr:
			if x.Op == token.MUL && isFloat(info, x) && !isConst(info, x) && !allowedParent(info, stack, x) {
				out = append(out, Finding{
					Pos:   fset.Position(x.Pos()),
					Expr:  text(x),
					start: fset.Position(x.Pos()).Offset,
					end:   fset.Position(x.End()).Offset,
				})
			}
		case *ast.SelectorExpr:
			if fn, ok := info.Uses[x.Sel].(*types.Func); ok && fn.Pkg() != nil && fn.Pkg().Path() == "math" && !exactMath[fn.Name()] {
				out = append(out, Finding{
					Pos:  fset.Position(x.Pos()),
					Expr: text(x),
					math: true,
				})
			}
		case *ast.AssignStmt:
			if x.Tok == token.MUL_ASSIGN && len(x.Lhs) == 1 && isFloat(info, x.Lhs[0]) {
				lhs, rhs := text(x.Lhs[0]), text(x.Rhs[0])
				if _, simple := ast.Unparen(x.Rhs[0]).(*ast.BinaryExpr); simple {
					rhs = "(" + rhs + ")"
				}
				out = append(out, Finding{
					Pos:     fset.Position(x.Pos()),
					Expr:    text(x),
					start:   fset.Position(x.Pos()).Offset,
					end:     fset.Position(x.End()).Offset,
					replace: fmt.Sprintf("%s = %s(%s * %s)", lhs, floatName(info, x.Lhs[0]), lhs, rhs),
				})
			}
		}
		stack = append(stack, n)
		return true
	})
	return out
}

// allowedParent reports whether the product e, whose ancestors are stack,
// stands where it cannot be fused: inside a float conversion, as an operand
// of * or /, or of a comparison.
func allowedParent(info *types.Info, stack []ast.Node, e ast.Expr) bool {
	i := len(stack) - 1
	for i >= 0 {
		if _, ok := stack[i].(*ast.ParenExpr); !ok {
			break
		}
		i--
	}
	if i < 0 {
		return false
	}
	switch p := stack[i].(type) {
	case *ast.CallExpr:
		tv, ok := info.Types[p.Fun]
		if !ok || !tv.IsType() {
			return false
		}
		b, ok := tv.Type.Underlying().(*types.Basic)
		return ok && b.Info()&types.IsFloat != 0
	case *ast.BinaryExpr:
		switch p.Op {
		case token.MUL, token.QUO, token.EQL, token.NEQ, token.LSS, token.LEQ, token.GTR, token.GEQ:
			return true
		}
	}
	return false
}

func floatName(info *types.Info, e ast.Expr) string {
	if b, ok := info.Types[e].Type.(*types.Basic); ok {
		return b.Name()
	}
	return types.TypeString(info.Types[e].Type, nil)
}

// Fix rewrites the files of findings (from Dir) so that each product is
// wrapped in a conversion, and returns the names of the files it changed.
// Run gofmt afterwards.
func Fix(findings []Finding) ([]string, error) {
	byFile := map[string][]Finding{}
	for _, f := range findings {
		if !f.Fixable() {
			return nil, fmt.Errorf("%s: cannot be fixed by wrapping", f)
		}
		byFile[f.Pos.Filename] = append(byFile[f.Pos.Filename], f)
	}
	var changed []string
	for name, fs := range byFile {
		src, err := os.ReadFile(name)
		if err != nil {
			return changed, err
		}
		type edit struct {
			at, end int
			text    string
			order   int
		}
		var edits []edit
		for _, f := range fs {
			if f.replace != "" {
				edits = append(edits, edit{at: f.start, end: f.end, text: f.replace})
				continue
			}
			// Opening before closing at equal offsets would nest wrongly;
			// closings sort after openings when applied from the end.
			edits = append(edits, edit{at: f.end, end: f.end, text: ")", order: 0})
			edits = append(edits, edit{at: f.start, end: f.start, text: "float64(", order: 1})
		}
		sort.SliceStable(edits, func(i, j int) bool {
			if edits[i].at != edits[j].at {
				return edits[i].at > edits[j].at
			}
			return edits[i].order < edits[j].order
		})
		out := append([]byte(nil), src...)
		for _, e := range edits {
			out = append(out[:e.at], append([]byte(e.text), out[e.end:]...)...)
		}
		if err := os.WriteFile(name, out, 0o644); err != nil {
			return changed, err
		}
		changed = append(changed, name)
	}
	sort.Strings(changed)
	return changed, nil
}
