package solver

import "sort"

// ValleyRatio and StrandedFlag define when a row is far from unimodal
// (see RowShape and the package documentation).
const (
	// ValleyRatio: a point is a valley when its probability is below
	// ValleyRatio times the largest probability beyond it (farther from
	// the row's mode on the same side).
	ValleyRatio = 0.1
	// StrandedFlag: a row is flagged when at least this much probability
	// lies beyond a valley. 1e-8 is the floor at which issue 10's
	// linear-programming check counts a probability as present; it lies
	// far above the rounding of a row (1e-16 relative), and it catches the
	// rows of examples/wage-risk.yaml that jump twelve or more states with
	// probability 1e-7 behind probabilities of 1e-40.
	StrandedFlag = 1e-8
)

// RowShape describes how far one transition row is from unimodal.
type RowShape struct {
	// StrandedMass is the probability beyond the innermost valley on each
	// side of the row's mode, summed over both sides: the mass a modeller
	// would not expect, cut off from the bulk by near-zero probabilities.
	// 0 for a unimodal row.
	StrandedMass float64 `json:"stranded_mass"`
	// FarFromUnimodal is StrandedMass ≥ StrandedFlag.
	FarFromUnimodal bool `json:"far_from_unimodal"`
}

// Shape returns the shape of the probability row p over the scalar levels
// x (any order; p and x are not modified). Sorted by level, with m the
// mode (the first largest probability), a point j on one side of m is a
// valley when
//
//	p_j < ValleyRatio · max{p_k : k beyond j on the same side},
//
// and every point beyond the innermost valley of its side is stranded.
// A unimodal row (probabilities never rising going outward from the
// mode) has no valley; a row with two separated peaks strands the lower
// one, and a row with mass far out behind near-zero probabilities
// strands that mass.
func Shape(p, x []float64) RowShape {
	return newShaper(x).shape(p)
}

// shaper tests rows on one set of levels: the order of the levels is
// found once, and the buffers are reused from row to row.
type shaper struct {
	order     []int     // point indices by increasing level
	q, beyond []float64 // scratch: the row in level order; running maxima
}

func newShaper(x []float64) *shaper {
	n := len(x)
	order := make([]int, n)
	for j := range order {
		order[j] = j
	}
	sort.SliceStable(order, func(a, b int) bool { return x[order[a]] < x[order[b]] })
	return &shaper{order: order, q: make([]float64, n), beyond: make([]float64, n+1)}
}

func (s *shaper) shape(p []float64) RowShape {
	q := s.q
	for k, j := range s.order {
		q[k] = p[j]
	}
	mode := 0
	for k, v := range q {
		if v > q[mode] {
			mode = k
		}
	}
	stranded := s.strandedSide(mode, 1) + s.strandedSide(mode, -1)
	return RowShape{StrandedMass: stranded, FarFromUnimodal: stranded >= StrandedFlag}
}

// strandedSide returns the mass beyond the innermost valley on one side
// of the mode (step +1: higher levels; −1: lower levels).
func (s *shaper) strandedSide(mode, step int) float64 {
	q, beyond := s.q, s.beyond
	end := len(q)
	if step < 0 {
		end = -1
	}
	// beyond[k] = max of q over the points beyond k on this side,
	// built from the outside in.
	best := 0.0
	for k := end - step; k != mode; k -= step {
		beyond[k] = best
		best = max(best, q[k])
	}
	for k := mode + step; k != end; k += step {
		if q[k] < ValleyRatio*beyond[k] {
			var sum float64
			for j := k + step; j != end; j += step {
				sum += q[j]
			}
			return sum
		}
	}
	return 0
}
