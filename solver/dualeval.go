package solver

import (
	"math"

	"gridstage/internal/portablemath"
)

// hessFloor is the probability below which a grid point is left out of
// the Hessian's sums (never out of the gradient's): its terms change an
// entry by less than 1e-20 of the largest squared deviation, far below the
// rounding of the sums, but far tail points of a persistent process are
// much of a row and cost L(L+1)/2 products each.
const hessFloor = 1e-20

// evaluate is the pass over the grid at log-weights a that a trial point
// of the line search needs, with the moment error the next Newton step
// needs if the trial is accepted: it sets e_j = exp(a_j − max a) and g to
// Σ_j e_j dev_j, and returns max a and s = Σ_j e_j, so that the dual is
// max a + log s and the moment error g/s (see accept). Two and four moment
// functions, the common cases, are unrolled into scalars.
func evaluate(a, e, dev []float64, L int, g []float64) (best, s float64) {
	best = math.Inf(-1)
	for _, x := range a {
		if x > best {
			best = x
		}
	}
	switch L {
	case 2:
		var g0, g1 float64
		for j, x := range a {
			ej := portablemath.Exp(x - best)
			e[j] = ej
			s += ej
			g0 += float64(ej * dev[2*j])
			g1 += float64(ej * dev[2*j+1])
		}
		g[0], g[1] = g0, g1
	case 4:
		var g0, g1, g2, g3 float64
		for j, x := range a {
			ej := portablemath.Exp(x - best)
			e[j] = ej
			s += ej
			row := dev[4*j : 4*j+4]
			g0 += float64(ej * row[0])
			g1 += float64(ej * row[1])
			g2 += float64(ej * row[2])
			g3 += float64(ej * row[3])
		}
		g[0], g[1], g[2], g[3] = g0, g1, g2, g3
	default:
		g = g[:L]
		clear(g)
		for j, x := range a {
			ej := portablemath.Exp(x - best)
			e[j] = ej
			s += ej
			for r, d := range dev[j*L : j*L+L] {
				g[r] += float64(ej * d)
			}
		}
	}
	return best, s
}

// accept makes the point evaluate summed into w.p (its weights e_j) and
// w.grad current: p = e/s and the moment error g/s.
func (w *Dual) accept(s float64) {
	inv := 1 / s
	for j := range w.p {
		w.p[j] = float64(w.p[j] * inv)
	}
	for k := range w.grad {
		w.grad[k] = float64(w.grad[k] * inv)
	}
}

// hessian sets the lower triangle of w.hess to the covariance of the
// moment functions under p, Σ_j p_j dev_j dev_jᵀ − g gᵀ with g = w.grad,
// over the points with p_j > hessFloor (see finishHessian for the
// cancellation guard). Two and four moment functions are unrolled.
func (w *Dual) hessian(dev []float64, n, L int) {
	h := w.hess
	switch L {
	case 2:
		var h00, h10, h11 float64
		for j, pj := range w.p[:n] {
			if !(pj > hessFloor) {
				continue
			}
			d0, d1 := dev[2*j], dev[2*j+1]
			x0, x1 := float64(pj*d0), float64(pj*d1)
			h00 += float64(x0 * d0)
			h10 += float64(x1 * d0)
			h11 += float64(x1 * d1)
		}
		h[0], h[1], h[2], h[3] = h00, 0, h10, h11
	case 4:
		var h00, h10, h11, h20, h21, h22, h30, h31, h32, h33 float64
		for j, pj := range w.p[:n] {
			if !(pj > hessFloor) {
				continue
			}
			row := dev[4*j : 4*j+4]
			d0, d1, d2, d3 := row[0], row[1], row[2], row[3]
			x0, x1, x2, x3 := float64(pj*d0), float64(pj*d1), float64(pj*d2), float64(pj*d3)
			h00 += float64(x0 * d0)
			h10 += float64(x1 * d0)
			h11 += float64(x1 * d1)
			h20 += float64(x2 * d0)
			h21 += float64(x2 * d1)
			h22 += float64(x2 * d2)
			h30 += float64(x3 * d0)
			h31 += float64(x3 * d1)
			h32 += float64(x3 * d2)
			h33 += float64(x3 * d3)
		}
		clear(h[:16])
		h[0] = h00
		h[4], h[5] = h10, h11
		h[8], h[9], h[10] = h20, h21, h22
		h[12], h[13], h[14], h[15] = h30, h31, h32, h33
	default:
		clear(h[:L*L])
		for j, pj := range w.p[:n] {
			if !(pj > hessFloor) {
				continue
			}
			row := dev[j*L : j*L+L]
			for r, d := range row {
				dr := float64(pj * d)
				hr := h[r*L : r*L+r+1]
				for c, dc := range row[:len(hr)] {
					hr[c] += float64(dr * dc)
				}
			}
		}
	}
	w.finishHessian(dev, n, L)
}

// choleskySolve factors the lower triangle of the L×L matrix a into l
// (a = l lᵀ) and, when a is numerically positive definite, solves
// l lᵀ x = b; it reports whether it was. Four moment functions are
// unrolled; the operations, in their order, are those of cholesky and
// cholSolve, so the results are the same to the bit.
func choleskySolve(a, l []float64, L int, b, x []float64) bool {
	if L != 4 {
		if !cholesky(a, l, L) {
			return false
		}
		cholSolve(l, L, b, x)
		return true
	}
	_ = a[15]
	_ = l[15]
	pd := func(s, diag float64) bool { return s > 1e-300 && s > 1e-14*diag }
	s := a[0]
	if !pd(s, a[0]) {
		return false
	}
	l00 := math.Sqrt(s)
	l10 := a[4] / l00
	s = a[5] - float64(l10*l10)
	if !pd(s, a[5]) {
		return false
	}
	l11 := math.Sqrt(s)
	l20 := a[8] / l00
	l21 := (a[9] - float64(l20*l10)) / l11
	s = a[10] - float64(l20*l20) - float64(l21*l21)
	if !pd(s, a[10]) {
		return false
	}
	l22 := math.Sqrt(s)
	l30 := a[12] / l00
	l31 := (a[13] - float64(l30*l10)) / l11
	l32 := (a[14] - float64(l30*l20) - float64(l31*l21)) / l22
	s = a[15] - float64(l30*l30) - float64(l31*l31) - float64(l32*l32)
	if !pd(s, a[15]) {
		return false
	}
	l33 := math.Sqrt(s)
	clear(l[:16])
	l[0] = l00
	l[4], l[5] = l10, l11
	l[8], l[9], l[10] = l20, l21, l22
	l[12], l[13], l[14], l[15] = l30, l31, l32, l33
	y0 := b[0] / l00
	y1 := (b[1] - float64(l10*y0)) / l11
	y2 := (b[2] - float64(l20*y0) - float64(l21*y1)) / l22
	y3 := (b[3] - float64(l30*y0) - float64(l31*y1) - float64(l32*y2)) / l33
	x3 := y3 / l33
	x2 := (y2 - float64(l32*x3)) / l22
	x1 := (y1 - float64(l21*x2) - float64(l31*x3)) / l11
	x0 := (y0 - float64(l10*x1) - float64(l20*x2) - float64(l30*x3)) / l00
	x[0], x[1], x[2], x[3] = x0, x1, x2, x3
	return true
}
