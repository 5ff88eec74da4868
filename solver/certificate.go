package solver

import (
	"fmt"
	"math"
)

// Certificate records on what grounds a state's row matches the number of
// moments it does.
type Certificate int

const (
	// CertNone: the method does not solve for moments (Tauchen,
	// Tauchen-Hussey) or matches them by construction (Rouwenhorst).
	CertNone Certificate = iota
	// CertSolved: every requested moment is matched; the dual converged.
	CertSolved
	// CertInfeasible: the state fell back, and the next level of the
	// ladder is proven infeasible on its grid by a separating direction y
	// (see infeasibleAt): no row whose every probability is at least
	// certFloor matches those moments.
	CertInfeasible
	// CertUnproven: the state fell back although no proof of infeasibility
	// was found. The solver is built so that this does not happen; it is
	// recorded, never hidden, if it does.
	CertUnproven
	// CertRelaxed: the smooth policy (MatchSmooth) matched every moment
	// up to the level reported and carried the others as closely as its
	// penalty allows; their errors are in the diagnostics.
	CertRelaxed
)

var certificateNames = [...]string{"none", "solved", "infeasible", "unproven", "relaxed"}

func (c Certificate) String() string {
	if c >= 0 && int(c) < len(certificateNames) {
		return certificateNames[c]
	}
	return fmt.Sprintf("Certificate(%d)", int(c))
}

// MarshalText writes the certificate's name (JSON and text outputs).
func (c Certificate) MarshalText() ([]byte, error) { return []byte(c.String()), nil }

// UnmarshalText reads a certificate's name.
func (c *Certificate) UnmarshalText(b []byte) error {
	for i, n := range certificateNames {
		if n == string(b) {
			*c = Certificate(i)
			return nil
		}
	}
	return fmt.Errorf("solver: unknown certificate %q", b)
}

// certFloor is the probability floor of an infeasibility certificate. It
// lies below 1e-8, the floor at which the test-time linear program
// (scipy's HiGHS) calls a level strictly feasible, so that a state this
// solver proves infeasible is one the linear program finds infeasible too.
const certFloor = 1e-9

// infeasibleAt reports whether the direction y (length L) proves that no
// probability vector p with every p_j ≥ certFloor has Σ_j p_j dev_j = 0.
// With v_j = y·dev_j, any such p satisfies
//
//	0 = Σ_j p_j v_j ≥ certFloor · Σ_{v_j>0} v_j − max_j (−v_j)⁺,
//
// so the test is certFloor·Σ⁺ v_j > max (−v_j)⁺, with every v_j moved
// against the claim by a bound on its rounding error. A target strictly
// outside the hull gives v_j > 0 for all j; one on or within rounding of
// its boundary gives v_j ≥ 0 up to rounding on the facet's points and
// v_j > 0 elsewhere.
func infeasibleAt(dev []float64, n, L int, y []float64) bool {
	var pos, neg float64
	for j := 0; j < n; j++ {
		var v, size float64
		for k, d := range dev[j*L : (j+1)*L] {
			v += float64(y[k] * d)
			size += math.Abs(float64(y[k] * d))
		}
		slack := float64(4 * float64(L+1) * 0x1p-52 * size)
		if v-slack > 0 {
			pos += v - slack
		}
		neg = math.Max(neg, slack-v)
	}
	return pos > 0 && certFloor*pos > neg && !math.IsNaN(pos+neg)
}

// combineCerts is the certificate of a state built from independent parts
// (a product chain, a stochastic-volatility state): the least assuring of
// the parts', in the order solved, none, relaxed, infeasible, unproven.
func combineCerts(a, b Certificate) Certificate {
	rank := func(c Certificate) int {
		switch c {
		case CertSolved:
			return 0
		case CertNone:
			return 1
		case CertRelaxed:
			return 2
		case CertInfeasible:
			return 3
		}
		return 4
	}
	if rank(a) >= rank(b) {
		return a
	}
	return b
}
