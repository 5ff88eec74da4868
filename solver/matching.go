package solver

import (
	"fmt"
	"strings"
)

// Matching names the per-state matching policy of maximum-entropy chains:
// how a state whose requested moments the grid cannot carry is treated.
type Matching int

const (
	// MatchExact matches the requested moments exactly where the grid can
	// carry them and falls back to fewer (4 → 2 → 1) where a proof says it
	// cannot (Tanaka and Toda 2013; Farmer and Toda 2017). The chain jumps
	// where a state changes level as a parameter moves.
	MatchExact Matching = iota
	// MatchSmooth solves a strictly convex relaxation of the dual in which
	// every moment is matched exactly while its multiplier stays moderate
	// and is traded off against entropy, smoothly, beyond that: the chain
	// is a smooth function of every process parameter (smoothdual.go).
	MatchSmooth
)

var matchingNames = [...]string{"exact", "smooth"}

func (m Matching) String() string {
	if int(m) >= 0 && int(m) < len(matchingNames) {
		return matchingNames[m]
	}
	return fmt.Sprintf("Matching(%d)", int(m))
}

// ParseMatching maps "exact" or "smooth" to its Matching.
func ParseMatching(s string) (Matching, error) {
	for i, n := range matchingNames {
		if n == s {
			return Matching(i), nil
		}
	}
	return 0, fmt.Errorf("solver: unknown matching %q (want one of %s)", s, strings.Join(matchingNames[:], ", "))
}

// MatchingNames lists the accepted matching-policy names.
func MatchingNames() []string { return append([]string(nil), matchingNames[:]...) }

// newPolicy returns the per-state policy for m with room for maxCols
// moment functions and a short Newton budget of quick iterations for the
// exact policy.
func newPolicy(m Matching, maxCols, quick int) matchPolicy {
	if m == MatchSmooth {
		return newSmoothMatch(maxCols)
	}
	return newExactMatch(maxCols, quick)
}

func checkMatching(m Matching) error {
	if m != MatchExact && m != MatchSmooth {
		return badParam("matching", float64(m), "exact or smooth")
	}
	return nil
}
