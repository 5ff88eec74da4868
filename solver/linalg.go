package solver

import (
	"errors"
	"math"
	"sort"

	"gridstage/internal/portablemath"
)

// Small dense linear algebra for the solver, written by the portability
// rules of doc.go ("Same numbers on every machine") so that its results
// are bit-identical on every architecture; gonum's routines (LAPACK and
// BLAS in Go, with amd64 assembly kernels) are not.

// tridiagEigenvalues returns the eigenvalues, ascending, of the symmetric
// tridiagonal matrix with diagonal diag and off-diagonal off (off[k] couples
// k and k+1; off[n-1] is ignored), by the implicit QL method with Wilkinson
// shifts (Bowdler, Martin, Reinsch and Wilkinson 1968, procedure tql1;
// Golub and Van Loan 2013, §8.3). Neither input is modified. It returns
// false if an eigenvalue needs more than 60 iterations.
func tridiagEigenvalues(diag, off []float64) ([]float64, bool) {
	n := len(diag)
	d := append([]float64(nil), diag...)
	e := make([]float64, n)
	copy(e, off[:n-1])
	for l := 0; l < n; l++ {
		for iter := 0; ; iter++ {
			// Find a negligible off-diagonal element e[m].
			m := l
			for ; m < n-1; m++ {
				dd := math.Abs(d[m]) + math.Abs(d[m+1])
				if math.Abs(e[m]) <= 0x1p-53*dd {
					break
				}
			}
			if m == l {
				break
			}
			if iter == 60 {
				return nil, false
			}
			// Wilkinson shift from the leading 2×2 block.
			g := (d[l+1] - d[l]) / (2 * e[l])
			r := portablemath.Hypot(g, 1)
			g = d[m] - d[l] + e[l]/(g+math.Copysign(r, g))
			s, c, p := 1.0, 1.0, 0.0
			i := m - 1
			for ; i >= l; i-- {
				f := float64(s * e[i])
				b := float64(c * e[i])
				r = portablemath.Hypot(f, g)
				e[i+1] = r
				if r == 0 {
					// Underflow: deflate and restart this eigenvalue.
					d[i+1] -= p
					e[m] = 0
					break
				}
				s = f / r
				c = g / r
				g = d[i+1] - p
				r = float64((d[i]-g)*s) + float64(2*c*b)
				p = float64(s * r)
				d[i+1] = g + p
				g = float64(c*r) - b
			}
			if r == 0 && i >= l {
				continue
			}
			d[l] -= p
			e[l] = g
			e[m] = 0
		}
	}
	sort.Float64s(d)
	return d, true
}

// symEigen returns the eigenvalues of the symmetric d×d matrix a
// (row-major; only its values are read, it is not modified), ascending,
// and the matching unit eigenvectors as the columns of a row-major d×d
// matrix, by the cyclic Jacobi method (Jacobi 1846; Rutishauser 1966;
// Golub and Van Loan 2013, §8.5.3). Sweeps stop when the off-diagonal
// mass falls below 2^-106 of the matrix's squared norm (or after 50
// sweeps; Jacobi converges quadratically, a few sweeps suffice for the
// small matrices here).
func symEigen(a []float64, d int) (vals, vecs []float64) {
	m := append([]float64(nil), a...)
	v := make([]float64, d*d)
	for k := 0; k < d; k++ {
		v[k*d+k] = 1
	}
	var norm float64
	for _, x := range m {
		norm += float64(x * x)
	}
	for sweep := 0; sweep < 50; sweep++ {
		var off float64
		for p := 0; p < d; p++ {
			for q := p + 1; q < d; q++ {
				off += float64(2 * m[p*d+q] * m[p*d+q])
			}
		}
		if off <= 0x1p-106*norm {
			break
		}
		for p := 0; p < d; p++ {
			for q := p + 1; q < d; q++ {
				apq := m[p*d+q]
				if apq == 0 {
					continue
				}
				// The rotation that zeroes m[p][q] (Golub and Van Loan,
				// Algorithm 8.5.1, the smaller of the two angles).
				tau := (m[q*d+q] - m[p*d+p]) / (2 * apq)
				t := 1 / (math.Abs(tau) + math.Sqrt(1+float64(tau*tau)))
				if tau < 0 {
					t = -t
				}
				c := 1 / math.Sqrt(1+float64(t*t))
				s := float64(t * c)
				for k := 0; k < d; k++ {
					mkp, mkq := m[k*d+p], m[k*d+q]
					m[k*d+p] = float64(c*mkp) - float64(s*mkq)
					m[k*d+q] = float64(s*mkp) + float64(c*mkq)
				}
				for k := 0; k < d; k++ {
					mpk, mqk := m[p*d+k], m[q*d+k]
					m[p*d+k] = float64(c*mpk) - float64(s*mqk)
					m[q*d+k] = float64(s*mpk) + float64(c*mqk)
				}
				for k := 0; k < d; k++ {
					vkp, vkq := v[k*d+p], v[k*d+q]
					v[k*d+p] = float64(c*vkp) - float64(s*vkq)
					v[k*d+q] = float64(s*vkp) + float64(c*vkq)
				}
			}
		}
	}
	order := make([]int, d)
	for k := range order {
		order[k] = k
	}
	sort.SliceStable(order, func(i, j int) bool { return m[order[i]*d+order[i]] < m[order[j]*d+order[j]] })
	vals = make([]float64, d)
	vecs = make([]float64, d*d)
	for col, k := range order {
		vals[col] = m[k*d+k]
		for r := 0; r < d; r++ {
			vecs[r*d+col] = v[r*d+k]
		}
	}
	return vals, vecs
}

// errSingular is returned by luFactor for a matrix with a zero pivot.
var errSingular = errors.New("solver: singular linear system")

// lu is an LU factorization with partial pivoting, P A = L U, of a square
// matrix, row-major (Golub and Van Loan 2013, Algorithm 3.4.1).
type lu struct {
	n    int
	a    []float64 // L below the diagonal (unit diagonal implied), U on and above
	perm []int     // row i of P A is row perm[i] of A
}

// luFactor factors the n×n row-major matrix a (not modified). It returns
// errSingular if a pivot is zero.
func luFactor(a []float64, n int) (*lu, error) {
	f := &lu{n: n, a: append([]float64(nil), a...), perm: make([]int, n)}
	for i := range f.perm {
		f.perm[i] = i
	}
	m := f.a
	for k := 0; k < n; k++ {
		p := k
		for i := k + 1; i < n; i++ {
			if math.Abs(m[i*n+k]) > math.Abs(m[p*n+k]) {
				p = i
			}
		}
		if m[p*n+k] == 0 {
			return nil, errSingular
		}
		if p != k {
			for j := 0; j < n; j++ {
				m[k*n+j], m[p*n+j] = m[p*n+j], m[k*n+j]
			}
			f.perm[k], f.perm[p] = f.perm[p], f.perm[k]
		}
		for i := k + 1; i < n; i++ {
			l := m[i*n+k] / m[k*n+k]
			m[i*n+k] = l
			for j := k + 1; j < n; j++ {
				m[i*n+j] -= float64(l * m[k*n+j])
			}
		}
	}
	return f, nil
}

// solve returns x with A x = b (b is not modified).
func (f *lu) solve(b []float64) []float64 {
	n, m := f.n, f.a
	x := make([]float64, n)
	for i := 0; i < n; i++ {
		s := b[f.perm[i]]
		for j := 0; j < i; j++ {
			s -= float64(m[i*n+j] * x[j])
		}
		x[i] = s
	}
	for i := n - 1; i >= 0; i-- {
		s := x[i]
		for j := i + 1; j < n; j++ {
			s -= float64(m[i*n+j] * x[j])
		}
		x[i] = s / m[i*n+i]
	}
	return x
}
