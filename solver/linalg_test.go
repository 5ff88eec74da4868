package solver

import (
	"math"
	"math/rand/v2"
	"testing"

	"gridstage/internal/pyref"
)

// TestPortableLinalgAgainstNumpy checks the solver's own eigenvalue and
// linear-system routines against numpy.linalg (LAPACK) from Debian's
// python3-numpy on random symmetric, tridiagonal and general matrices.
// Tolerance 1e-13 relative to the matrix's norm: both sides are backward
// stable, so eigenvalues and well-conditioned solutions agree to a small
// multiple of n·2^-52 (n ≤ 40 here).
func TestPortableLinalgAgainstNumpy(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 14))
	type tri struct{ Diag, Off []float64 }
	type sym struct {
		D int
		A []float64
	}
	type sys struct {
		N    int
		A, B []float64
	}
	var tris []tri
	for _, n := range []int{1, 2, 5, 17, 40} {
		var c tri
		for k := 0; k < n; k++ {
			c.Diag = append(c.Diag, rng.NormFloat64())
			c.Off = append(c.Off, rng.Float64()+0.01)
		}
		tris = append(tris, c)
	}
	var syms []sym
	for _, d := range []int{1, 2, 3, 4, 6} {
		a := make([]float64, d*d)
		for i := 0; i < d; i++ {
			for j := 0; j <= i; j++ {
				v := rng.NormFloat64()
				a[i*d+j], a[j*d+i] = v, v
			}
		}
		syms = append(syms, sym{d, a})
	}
	var systems []sys
	for _, n := range []int{1, 3, 9, 25} {
		c := sys{N: n}
		for k := 0; k < n*n; k++ {
			c.A = append(c.A, rng.NormFloat64())
		}
		for k := 0; k < n; k++ {
			c.A[k*n+k] += float64(n) // keep it well conditioned
			c.B = append(c.B, rng.NormFloat64())
		}
		systems = append(systems, c)
	}
	var ref struct {
		Tri, SymVals [][]float64
		Solve        [][]float64
	}
	pyref.Eval(t, map[string]any{"tri": tris, "sym": syms, "sys": systems}, `
tri = []
for c in data["tri"]:
    n = len(c["Diag"])
    m = np.diag(c["Diag"]) + np.diag(c["Off"][:n-1], 1) + np.diag(c["Off"][:n-1], -1)
    tri.append(np.linalg.eigvalsh(m).tolist())
symv = [np.linalg.eigvalsh(np.array(c["A"]).reshape(c["D"], c["D"])).tolist() for c in data["sym"]]
solve = [np.linalg.solve(np.array(c["A"]).reshape(c["N"], c["N"]), np.array(c["B"])).tolist() for c in data["sys"]]
print(json.dumps({"Tri": tri, "SymVals": symv, "Solve": solve}))
`, &ref)

	norm := func(xs []float64) float64 {
		var s float64
		for _, x := range xs {
			s = math.Max(s, math.Abs(x))
		}
		return math.Max(s, 1)
	}
	for i, c := range tris {
		got, ok := tridiagEigenvalues(c.Diag, c.Off)
		if !ok {
			t.Fatalf("tridiagonal %d: no convergence", i)
		}
		scale := norm(c.Diag) + norm(c.Off)
		for k := range got {
			if math.Abs(got[k]-ref.Tri[i][k]) > 1e-13*scale {
				t.Errorf("tridiagonal n=%d: eigenvalue %d = %v, numpy %v", len(c.Diag), k, got[k], ref.Tri[i][k])
			}
		}
	}
	for i, c := range syms {
		vals, vecs := symEigen(c.A, c.D)
		scale := norm(c.A)
		for k := range vals {
			if math.Abs(vals[k]-ref.SymVals[i][k]) > 1e-13*scale {
				t.Errorf("symmetric d=%d: eigenvalue %d = %v, numpy %v", c.D, k, vals[k], ref.SymVals[i][k])
			}
			// A v = λ v and |v| = 1, checked directly.
			var nv float64
			for r := 0; r < c.D; r++ {
				var av float64
				for s := 0; s < c.D; s++ {
					av += c.A[r*c.D+s] * vecs[s*c.D+k]
				}
				nv += vecs[r*c.D+k] * vecs[r*c.D+k]
				if math.Abs(av-vals[k]*vecs[r*c.D+k]) > 1e-13*scale {
					t.Errorf("symmetric d=%d: (A v - λ v)[%d] of eigenvector %d is %v", c.D, r, k, av-vals[k]*vecs[r*c.D+k])
				}
			}
			if math.Abs(nv-1) > 1e-14 {
				t.Errorf("symmetric d=%d: eigenvector %d has squared norm %v", c.D, k, nv)
			}
		}
	}
	for i, c := range systems {
		f, err := luFactor(c.A, c.N)
		if err != nil {
			t.Fatal(err)
		}
		x := f.solve(c.B)
		for k := range x {
			if math.Abs(x[k]-ref.Solve[i][k]) > 1e-13*norm(ref.Solve[i]) {
				t.Errorf("system n=%d: x[%d] = %v, numpy %v", c.N, k, x[k], ref.Solve[i][k])
			}
		}
	}
	if _, err := luFactor([]float64{1, 2, 2, 4}, 2); err == nil {
		t.Error("luFactor accepted a singular matrix")
	}
}
