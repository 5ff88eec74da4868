package solver

import "math"

// Symmetry by construction. When the innovation is symmetric about its
// mean and the grid, its weights and the conditional laws of the states
// are symmetric about a centre c (state i mirrors state m−1−i), the
// maximum-entropy row of state m−1−i is row i reversed: the problem of the
// one is the other's reflected. The solver then solves the states of one
// half only and copies the rest, so mirrored rows are exact mirrors
// (bit for bit) and the work halves. A self-mirrored state (the middle of
// an odd grid, an i.i.d. row) is made symmetric by averaging it with its
// reverse, which keeps every matched moment because the odd targets are 0.

// symmetricAboutMean reports whether d is symmetric about its mean (a
// property of the law's family and parameters, not a numerical test).
func symmetricAboutMean(d Distribution) bool {
	switch v := d.(type) {
	case nil:
		return true // the standard normal
	case Normal, StudentT, Laplace:
		return true
	case Standardized:
		return symmetricAboutMean(v.Base)
	case Beta:
		return v.Alpha == v.Beta
	case Mixture:
		return mixtureSymmetric(v)
	}
	return false
}

// mixtureSymmetric reports whether every component has a partner of the
// same weight and s.d. whose mean is its mirror about the mixture's mean.
func mixtureSymmetric(d Mixture) bool {
	m := d.Mean()
	for c := range d.Weights {
		found := false
		for k := range d.Weights {
			if d.Weights[k] == d.Weights[c] && d.SDs[k] == d.SDs[c] &&
				math.Abs((d.Means[k]-m)+(d.Means[c]-m)) <= 1e-14*(math.Abs(d.Means[c])+math.Abs(m)+d.SDs[c]) {
				found = true
				break
			}
		}
		if !found {
			return false
		}
	}
	return true
}

// symTol is the relative tolerance of the geometric symmetry test: grids
// built symmetric differ from their reflection by rounding only (a few
// ulps of the grid's span).
const symTol = 1e-12

// scalarMirror reports whether the rows of the univariate problem (grid
// nodes with log weights logW, from-states with law) mirror each other.
func scalarMirror(nodes, logW []float64, law conditional) bool {
	n, m := len(nodes), len(law.Mean)
	if n < 2 || !symmetricAboutMean(law.Shock) {
		return false
	}
	span := nodes[n-1] - nodes[0]
	c := (nodes[0] + nodes[n-1]) / 2
	tol := float64(symTol * (span + math.Abs(c)))
	for j := 0; j < n/2; j++ {
		if math.Abs(nodes[j]+nodes[n-1-j]-float64(2*c)) > tol ||
			math.Abs(logW[j]-logW[n-1-j]) > symTol*(1+math.Abs(logW[j])) {
			return false
		}
	}
	for i := 0; i < (m+1)/2; i++ {
		k := m - 1 - i
		if math.Abs(law.Mean[i]+law.Mean[k]-float64(2*c)) > tol || math.Abs(law.SD[i]-law.SD[k]) > symTol*law.SD[i] {
			return false
		}
	}
	return true
}

// mirrorRow writes src reversed into dst (both length n).
func mirrorRow(dst, src []float64) {
	n := len(src)
	for j := range src {
		dst[n-1-j] = src[j]
	}
}

// symmetrizeRow replaces row by the average of itself and its reverse,
// exactly symmetric: both halves are assigned the same rounded sum.
func symmetrizeRow(row []float64) {
	n := len(row)
	for j := 0; j < n/2; j++ {
		a := (row[j] + row[n-1-j]) / 2
		row[j], row[n-1-j] = a, a
	}
}
