package solver

import "math"

// maxHullFacets bounds the facets the exact feasibility test enumerates;
// beyond it (fine grids, many moments) infeasibility is left to Newton.
const maxHullFacets = 200000

// powerMomentsFeasible decides whether standardized power-moment targets
// t_k = E z^k (k = 1..L) can be matched by a distribution with positive
// weight on every point of the ascending grid z, i.e. whether (t_1..t_L)
// lies in the interior of the convex hull of the moment curve points
// (z_j, z_j², …, z_j^L). That hull is a cyclic polytope, whose facets are
// the L-subsets S of the grid satisfying Gale's evenness condition (Gale
// 1963; Ziegler 1995, Theorem 0.7): every maximal run of consecutive
// members that touches neither end of the grid has even length. The facet
// through S is the zero set of P_S(z) = Π_{s∈S} (z − z_s), which has one
// sign on all other grid points, so the target is interior iff
// E P_S(z) has that sign, strictly, for every facet.
//
// decided is false when the grid has too many facets to enumerate cheaply;
// then feasible is true and the dual solver decides.
func powerMomentsFeasible(z, targets []float64) (feasible, decided bool) {
	y, decided := powerMomentsSeparator(z, targets)
	return y == nil, decided
}

// powerMomentsSeparator runs the facet test of powerMomentsFeasible and
// returns, for a target outside the interior, the direction y (length L)
// of the violated facet in the coordinates of fillDeviations: with
// dev_jk = z_j^{k+1} − t_k, y·dev_j = ±(P_S(z_j) − E P_S), which is ≥ 0 up
// to the target's distance from the facet. y is nil for an interior target
// or an undecided test. With n ≤ L points the hull has no interior: y
// comes from P(z) = Π_j (z − z_j), which vanishes on the whole grid, so
// y·dev_j = −E P is the same for every j and separates unless the target
// happens to satisfy E P = 0.
func powerMomentsSeparator(z, targets []float64) (y []float64, decided bool) {
	n, L := len(z), len(targets)
	if n <= L {
		coef := make([]float64, n+1)
		coef[0] = 1
		for deg, r := range z {
			for k := deg + 1; k >= 1; k-- {
				coef[k] = coef[k-1] - float64(r*coef[k])
			}
			coef[0] = float64(-r * coef[0])
		}
		e := coef[0]
		for k := 1; k <= n; k++ {
			e += float64(coef[k] * targets[k-1])
		}
		if e == 0 {
			return nil, true
		}
		y = make([]float64, L)
		for k := 1; k <= n; k++ {
			y[k-1] = float64(-math.Copysign(1, e) * coef[k])
		}
		return y, true
	}
	if binomial(n, (L+1)/2) > maxHullFacets {
		return nil, false
	}
	moments := make([]float64, L+1) // E z^0..z^L
	moments[0] = 1
	copy(moments[1:], targets)
	coef := make([]float64, L+1)
	members := make([]int, 0, L)
	inside := true
	sign := 1.0
	var rec func(i, runStart int)
	rec = func(i, runStart int) {
		if !inside {
			return
		}
		if len(members) == L {
			last := members[L-1]
			if runStart > 0 && last < n-1 && (last-runStart+1)%2 == 1 {
				return // an interior run of odd length: not a facet
			}
			inside, sign = facetAdmits(z, members, moments, coef)
			return
		}
		if n-i < L-len(members) {
			return
		}
		// i joins S.
		start := runStart
		if len(members) == 0 || members[len(members)-1] != i-1 {
			start = i
		}
		members = append(members, i)
		rec(i+1, start)
		members = members[:len(members)-1]
		// i stays out: an open run ending at i−1 must be even unless it
		// started at the first point.
		if len(members) > 0 && members[len(members)-1] == i-1 && runStart > 0 && (i-runStart)%2 == 1 {
			return
		}
		rec(i+1, -1)
	}
	rec(0, -1)
	if inside {
		return nil, true
	}
	y = make([]float64, L)
	for k := range y {
		y[k] = float64(sign * coef[k+1])
	}
	return y, true
}

// facetAdmits reports whether the targets lie strictly on the inner side of
// the facet through the members (ascending indices), and the sign that
// P_S takes on the grid points off the facet.
func facetAdmits(z []float64, members []int, moments, coef []float64) (bool, float64) {
	// Expand Π (z − z_s) into coefficients coef[0..L].
	clear(coef)
	coef[0] = 1
	deg := 0
	for _, s := range members {
		r := z[s]
		deg++
		for k := deg; k >= 1; k-- {
			coef[k] = coef[k-1] - float64(r*coef[k])
		}
		coef[0] = float64(-r * coef[0])
	}
	var e, size float64
	for k, c := range coef {
		e += float64(c * moments[k])
		size += float64(math.Abs(c) * math.Abs(moments[k]))
	}
	// On a grid point j outside S, P_S(z_j) has the sign (−1)^m, m the
	// number of members above j; Gale's condition makes m's parity the same
	// for every such j, so the first non-member decides.
	first := 0
	for k, s := range members {
		if s != k {
			break
		}
		first = k + 1
	}
	above := len(members) - first
	sign := 1.0
	if above%2 == 1 {
		sign = -1
	}
	// A margin of 1e-12 of the terms' size separates the interior from
	// targets on the boundary up to rounding.
	return sign*e > 1e-12*size, sign
}
