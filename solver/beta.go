package solver

import (
	"math"

	"gridstage/internal/portablemath"
)

// Beta is the beta distribution with shapes Alpha, Beta rescaled to [Lo, Hi].
// The zero values of Lo and Hi mean [0, 1].
type Beta struct{ Alpha, Beta, Lo, Hi float64 }

func (d Beta) bounds() (lo, hi float64) {
	if d.Lo == 0 && d.Hi == 0 {
		return 0, 1
	}
	return d.Lo, d.Hi
}

func (d Beta) LogProb(x float64) float64 {
	lo, hi := d.bounds()
	u := (x - lo) / (hi - lo)
	if u < 0 || u > 1 {
		return math.Inf(-1)
	}
	lab, _ := portablemath.Lgamma(d.Alpha + d.Beta)
	la, _ := portablemath.Lgamma(d.Alpha)
	lb, _ := portablemath.Lgamma(d.Beta)
	var lu, l1mu float64
	if d.Alpha != 1 {
		lu = float64((d.Alpha - 1) * portablemath.Log(u))
	}
	if d.Beta != 1 {
		l1mu = float64((d.Beta - 1) * portablemath.Log(1-u))
	}
	return lab - la - lb + lu + l1mu - portablemath.Log(hi-lo)
}
func (d Beta) CDF(x float64) float64 {
	lo, hi := d.bounds()
	u := (x - lo) / (hi - lo)
	switch {
	case u <= 0:
		return 0
	case u >= 1:
		return 1
	}
	return portablemath.BetaRegularized(d.Alpha, d.Beta, u)
}
func (d Beta) Quantile(p float64) float64 {
	lo, hi := d.bounds()
	if p < 0 || p > 1 {
		panic("solver: beta quantile of a probability outside [0, 1]")
	}
	return lo + float64((hi-lo)*portablemath.BetaRegularizedInverse(d.Alpha, d.Beta, p))
}

// raw01 returns E U^k on [0, 1]: Π_{r<k} (α+r)/(α+β+r).
func (d Beta) raw01(k int) float64 {
	r := 1.0
	for i := 0; i < k; i++ {
		r = float64(r * ((d.Alpha + float64(i)) / (d.Alpha + d.Beta + float64(i))))
	}
	return r
}
func (d Beta) Mean() float64 {
	lo, hi := d.bounds()
	return lo + float64((hi-lo)*d.raw01(1))
}
func (d Beta) StdDev() float64 {
	lo, hi := d.bounds()
	a, b := d.Alpha, d.Beta
	return float64((hi - lo) * math.Sqrt(a*b/((a+b)*(a+b)*(a+b+1))))
}

// StdMoment is invariant under the affine map to [Lo, Hi].
func (d Beta) StdMoment(k int) (float64, bool) {
	return stdMomentFromCentral(func(j int) float64 { return centralFromRaw(d.raw01, j) }, k), true
}
func (d Beta) Support() (lo, hi float64) { return d.bounds() }
