package solver

import (
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

// StudentT is the location-scale Student t distribution: Loc + Scale·T with
// T ~ t(Nu). Its variance is Scale²·Nu/(Nu−2) for Nu > 2.
type StudentT struct{ Nu, Loc, Scale float64 }

func (d StudentT) dist() distuv.StudentsT {
	return distuv.StudentsT{Mu: d.Loc, Sigma: d.Scale, Nu: d.Nu}
}
func (d StudentT) LogProb(x float64) float64  { return d.dist().LogProb(x) }
func (d StudentT) CDF(x float64) float64      { return d.dist().CDF(x) }
func (d StudentT) Quantile(p float64) float64 { return d.dist().Quantile(p) }
func (d StudentT) Mean() float64              { return d.Loc }
func (d StudentT) StdDev() float64            { return d.Scale * math.Sqrt(d.Nu/(d.Nu-2)) }

// StdMoment: for even k < ν, E T^k = ν^{k/2} Π_{i=1}^{k/2} (2i−1)/(ν−2i);
// odd moments below ν vanish; moments of order ≥ ν are infinite.
func (d StudentT) StdMoment(k int) (float64, bool) {
	if float64(k) >= d.Nu {
		return math.Inf(1), false
	}
	if k%2 == 1 {
		return 0, true
	}
	m := math.Pow(d.Nu, float64(k)/2)
	for i := 1; i <= k/2; i++ {
		m *= float64(2*i-1) / (d.Nu - float64(2*i))
	}
	v := d.Nu / (d.Nu - 2)
	return m / math.Pow(v, float64(k)/2), true
}
func (d StudentT) Support() (lo, hi float64) { return math.Inf(-1), math.Inf(1) }
