package solver

import (
	"math"
	"sync"

	"gridstage/internal/portablemath"
)

// The equal-probability-interval method of Adda and Cooper (2003) for the
// Gaussian AR(1) x' = (1 − ρ) μ + ρ x + σ ε.
//
// With σ_x = σ/√(1−ρ²), cut the line at the k/N quantiles of N(μ, σ_x²),
// e_k = μ + σ_x a_k with a_k = Φ⁻¹(k/N) (a_0 = −∞, a_N = +∞). State i is the
// conditional mean of the stationary law on its interval,
//
//	z_i = μ + N σ_x [φ(a_{i−1}) − φ(a_i)],
//
// and the transition probability is the chance of moving from interval i to
// interval j when today's value is drawn from the stationary law restricted
// to interval i:
//
//	π_ij = N ∫_{e_{i−1}}^{e_i} f(u) [Φ((e_j − (1−ρ)μ − ρu)/σ) − Φ((e_{j−1} − (1−ρ)μ − ρu)/σ)] du.
//
// With u = μ + σ_x t the integral no longer depends on μ or σ:
//
//	π_ij = N ∫_{a_{i−1}}^{a_i} φ(t) [Φ((a_j − ρt)/s) − Φ((a_{j−1} − ρt)/s)] dt,   s = √(1−ρ²),
//
// which is N times the probability that a standard bivariate normal pair
// with correlation ρ falls in the rectangle I_i × I_j [derived]. Hence
// π_ij = π_ji (the pair is exchangeable) and π_ij = π_{N+1−i,N+1−j} (the law
// is symmetric about 0); rows sum to one, so columns do too: the matrix is
// doubly stochastic and the stationary distribution is uniform, 1/N.
//
// Reference: Adda, J. and Cooper, R. (2003), Dynamic Economics: Quantitative
// Methods and Applications, MIT Press.

// addaCooperTail is where the quadrature cuts the two unbounded end
// intervals, in stationary standard deviations. The integrand is at most
// φ(t), so the dropped part of any entry is at most N Φ(−12) ≤ 10⁴ · 1.8e-33.
const addaCooperTail = 12

// addaCooperTol is δ in the per-panel error target below: every entry of a
// row over interval I_i is integrated to within δ |I_i| / N (|I_i| its
// truncated length), so row sums are exact to δ (T + 4) and column sums to
// 2Tδ/N — far below rounding at δ = 1e-17.
const addaCooperTol = 1e-17

// addaCooperBreaks returns the standardized cut points a_0 … a_N,
// a_k = Φ⁻¹(k/N), with a_0 = −∞ and a_N = +∞, set exactly antisymmetric
// (a_{N−k} = −a_k) so that the grid and matrix keep the symmetry of the law.
func addaCooperBreaks(n int) []float64 {
	a := make([]float64, n+1)
	a[0], a[n] = math.Inf(-1), math.Inf(1)
	std := Normal{0, 1}
	for k := 1; 2*k < n; k++ {
		a[k] = std.Quantile(float64(k) / float64(n))
		a[n-k] = -a[k]
	}
	return a // for even n, a[n/2] stays 0
}

// stdNormalPDF is φ(t).
func stdNormalPDF(t float64) float64 { return portablemath.Exp(-t*t/2) / math.Sqrt(2*math.Pi) }

// pdfDrop returns φ(a) − φ(b) for a < b without the cancellation of the
// direct difference on narrow intervals: φ(a) − φ(b) = −φ(a) expm1(−(b−a)(b+a)/2).
func pdfDrop(a, b float64) float64 {
	switch {
	case math.IsInf(a, -1):
		return -stdNormalPDF(b)
	case math.IsInf(b, 1):
		return stdNormalPDF(a)
	}
	return float64(-stdNormalPDF(a) * portablemath.Expm1(-(b-a)*(b+a)/2))
}

// addaCooperGrid returns the N conditional means z_i of N(mean, sd²) on
// its equal-probability intervals, exactly symmetric about mean.
func addaCooperGrid(n int, mean, sd float64) []float64 {
	a := addaCooperBreaks(n)
	z := make([]float64, n)
	for i := 0; 2*i+1 < n; i++ {
		d := float64(float64(n) * sd * pdfDrop(a[i], a[i+1]))
		z[i], z[n-1-i] = mean+d, mean-d
	}
	if n%2 == 1 {
		z[n/2] = mean
	}
	return z
}

// addaCooperMatrix fills trans (n×n, row-major) with the Adda-Cooper
// matrix for persistence rho, each row rescaled to sum to one (a change at
// rounding level: see addaCooperRaw).
func addaCooperMatrix(n int, rho float64, trans []float64) {
	addaCooperRaw(n, rho, trans)
	for i := 0; i < n; i++ {
		normalizeRow(trans[i*n : (i+1)*n])
	}
}

// addaCooperRaw fills trans with the integrals π_ij as computed, and
// returns an a-priori bound on the error of any entry and the largest
// distance of a row sum from one (exactly one in exact arithmetic).
//
// Each interval I_i, cut to [−T, T] with T = addaCooperTail, is split into
// m panels of half-width h ≤ Y/2 with Y = min(1, s/|ρ|), and each panel is
// integrated by an n_p-point Gauss-Legendre rule. The integrand
// g(t) = φ(t) [Φ(β_j(t)) − Φ(β_{j−1}(t))], β(t) = (a − ρt)/s, is entire;
// on the Bernstein ellipse of the panel with semi-minor axis Y
// (parameter r = Y/h + √((Y/h)² + 1) ≥ 2 + √5) |Im t| ≤ Y and
// |Im β| ≤ V = |ρ|Y/s ≤ 1, so, from |φ(x+iy)| = φ(x) e^{y²/2} and
// Φ(u+iv) = Φ(u) + i ∫_0^v φ(u+iτ) dτ,
//
//	|g| ≤ M = φ(x₀) e^{Y²/2} · 2 (1 + φ(0) V e^{V²/2}),
//
// where x₀ is the point of the ellipse's real range closest to 0 (so tail
// panels, where φ is tiny, need few points).
// Gauss-Legendre with n_p points then errs by at most
// h · (64/15) M r^{−2n_p}/(r² − 1) (Trefethen 2008, "Is Gauss quadrature
// better than Clenshaw-Curtis?", SIAM Review 50, Theorem 4.5 [memory]), and
// n_p is the smallest count that makes N times this at most δ·2h/N,
// δ = addaCooperTol. The returned bound is the largest sum over an
// interval's panels, plus the truncated tail.
//
// Only the wedge i ≤ j, i + j ≤ N − 1 is integrated; the other entries are
// copies by the two exact symmetries above.
func addaCooperRaw(n int, rho float64, trans []float64) (bound, rowDefect float64) {
	a := addaCooperBreaks(n)
	s := math.Sqrt(float64((1 - rho) * (1 + rho)))
	y := 1.0
	if math.Abs(rho) > s {
		y = s / math.Abs(rho)
	}
	v := math.Abs(rho) * y / s
	phi0 := 1 / math.Sqrt(2*math.Pi)
	mScale := float64(portablemath.Exp(y*y/2) * 2 * (1 + float64(phi0*v*portablemath.Exp(v*v/2)))) // M / φ(x₀)
	nf := float64(n)
	tail := float64(nf * 0.5 * portablemath.Erfc(addaCooperTail/math.Sqrt2))

	var nodes, weights []float64
	row := make([]float64, n)
	for i := 0; 2*i < n; i++ {
		lo, hi := math.Max(a[i], -addaCooperTail), math.Min(a[i+1], addaCooperTail)
		nodes, weights = nodes[:0], weights[:0]
		panels := math.Ceil((hi - lo) / y)
		h := (hi - lo) / (2 * panels)
		r := y/h + math.Sqrt(y*y/(h*h)+1)
		reach := h * (r + 1/r) / 2 // the ellipse's real semi-axis
		var sum float64
		for p := 0; p < int(panels); p++ {
			mid := lo + float64(h*float64(2*p+1))
			mBound := float64(stdNormalPDF(math.Max(0, math.Abs(mid)-reach)) * mScale)
			// Smallest n_p with N·h·(64/15)·M·r^{−2n_p}/(r²−1) ≤ δ·2h/N.
			np := int(math.Ceil(portablemath.Log(nf*nf*64*mBound/(15*2*addaCooperTol*(float64(r*r)-1))) / (2 * portablemath.Log(r))))
			np = max(np, 1)
			sum += nf * h * 64 * mBound / 15 * portablemath.Pow(r, float64(-2*float64(np))) / (float64(r*r) - 1)
			rule := gaussLegendreUnit(np)
			for k, x := range rule.Nodes {
				t := mid + float64(h*x)
				nodes = append(nodes, t)
				weights = append(weights, float64(nf*h*rule.Weights[k]*stdNormalPDF(t)))
			}
		}
		bound = math.Max(bound, sum+tail)
		// Entries j = i … n−1−i of row i; boundary b of interval j is a_b.
		last := n - 1 - i
		for j := i; j <= last; j++ {
			row[j] = 0
		}
		for k, t := range nodes {
			w := weights[k]
			prevCDF, prevSF, prevX := normalTails(a[i], rho, s, t)
			for j := i; j <= last; j++ {
				cdf, sf, x := normalTails(a[j+1], rho, s, t)
				// Differences of survival values keep precision when both
				// ends lie in the upper tail, where CDF values round to one.
				if prevX > 0 {
					row[j] += float64(w * (prevSF - sf))
				} else {
					row[j] += float64(w * (cdf - prevCDF))
				}
				prevCDF, prevSF, prevX = cdf, sf, x
			}
		}
		for j := i; j <= last; j++ {
			p := row[j]
			trans[i*n+j], trans[j*n+i] = p, p
			trans[(n-1-i)*n+(n-1-j)], trans[(n-1-j)*n+(n-1-i)] = p, p
		}
	}
	for i := 0; i < n; i++ {
		var sum float64
		for _, p := range trans[i*n : (i+1)*n] {
			sum += p
		}
		rowDefect = math.Max(rowDefect, math.Abs(sum-1))
	}
	return bound, rowDefect
}

// unitRules caches Gauss-Legendre rules on [−1, 1] by point count: the
// rules never change, and computing one costs an eigen-decomposition.
var unitRules sync.Map // int → Rule

// gaussLegendreUnit returns the n-point Gauss-Legendre rule on [−1, 1]
// (shared: callers must not modify it).
func gaussLegendreUnit(n int) Rule {
	if r, ok := unitRules.Load(n); ok {
		return r.(Rule)
	}
	r, _ := unitRules.LoadOrStore(n, GaussLegendre(n, -1, 1))
	return r.(Rule)
}

// normalTails returns Φ(x) and 1 − Φ(x) at x = (c − ρt)/s, and x itself;
// the smaller of the two tails is computed directly, so each is accurate
// where it is the one a difference needs. Infinite c gives the limits.
func normalTails(c, rho, s, t float64) (cdf, sf, x float64) {
	switch {
	case math.IsInf(c, -1):
		return 0, 1, c
	case math.IsInf(c, 1):
		return 1, 0, c
	}
	x = (c - float64(rho*t)) / s
	if x > 0 {
		sf = float64(0.5 * portablemath.Erfc(x/math.Sqrt2))
		return 1 - sf, sf, x
	}
	cdf = float64(0.5 * portablemath.Erfc(-x/math.Sqrt2))
	return cdf, 1 - cdf, x
}
