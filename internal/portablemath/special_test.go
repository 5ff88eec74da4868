package portablemath

import (
	"math"
	"math/rand/v2"
	"testing"

	"gridstage/internal/pyref"
)

// TestSpecialAgainstMpmath compares the special functions the solver's
// distributions use with mpmath at 50 digits (Debian's python3-mpmath).
// Each check states its tolerance; they are the measured errors of these
// routines on the points below, rounded up, and far below what a
// discretization can resolve:
//
//   - Lgamma, x in (0, 60]: 2 ulp of the value, or 2⁻⁵³ absolute near its
//     zeros at 1 and 2 where the value itself vanishes;
//   - Sin, Cos, |x| < 100: 1 ulp, or 2⁻⁵³ absolute near their zeros;
//   - Hypot: 1 ulp;
//   - NormalQuantile (Wichura 1988, AS 241, stated relative accuracy
//     about 1e-16): 4 ulp;
//   - BetaRegularized for a, b in [0.25, 40] (Cephes incbet, stated peak
//     relative error about 1e-13 for such shapes): 1e-13 relative;
//   - BetaRegularizedInverse: the x it returns gives back y through
//     BetaRegularized (checked against mpmath above) to 1e-12 relative.
func TestSpecialAgainstMpmath(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 21))
	var gx, tx, hp, hq, np []float64
	type beta struct{ A, B, X float64 }
	var bs []beta
	for i := 0; i < 200; i++ {
		gx = append(gx, rng.Float64()*60)
		tx = append(tx, rng.Float64()*200-100)
		hp, hq = append(hp, rng.NormFloat64()*math.Exp(rng.Float64()*40-20)), append(hq, rng.NormFloat64())
		np = append(np, rng.Float64())
		bs = append(bs, beta{0.25 + rng.Float64()*40, 0.25 + rng.Float64()*40, rng.Float64()})
	}
	gx = append(gx, 0.5, 1, 2, 3, 1.5, 2.5, 1e-5, 1-1e-9, 2+1e-9)
	np = append(np, 1e-300, 1e-20, 1e-10, 0.02425, 0.5, 0.975, 1-1e-10, 0.075, 0.425+0.5)
	for _, nu := range []float64{3, 4.5, 10, 30} {
		for _, x := range []float64{0.01, 0.3, 0.9, 0.999} {
			bs = append(bs, beta{nu / 2, 0.5, x})
		}
	}
	var ref struct {
		Lgamma, Sin, Cos, Hypot, NormalQuantile, Beta []float64
	}
	pyref.Eval(t, map[string]any{"g": gx, "t": tx, "hp": hp, "hq": hq, "n": np, "b": bs}, `
mpmath.mp.dps = 50
F = lambda v: float(v)
def nq(p):
    # 1 − 2p keeps p's digits only at a precision beyond its exponent.
    with mpmath.workdps(50 + int(-mpmath.log10(min(p, 1 - p)))):
        return F(-mpmath.sqrt(2) * mpmath.erfinv(1 - 2 * mpmath.mpf(p)))
print(json.dumps({
    "Lgamma": [F(mpmath.loggamma(mpmath.mpf(x))) for x in data["g"]],
    "Sin": [F(mpmath.sin(mpmath.mpf(x))) for x in data["t"]],
    "Cos": [F(mpmath.cos(mpmath.mpf(x))) for x in data["t"]],
    "Hypot": [F(mpmath.hypot(mpmath.mpf(p), mpmath.mpf(q))) for p, q in zip(data["hp"], data["hq"])],
    "NormalQuantile": [nq(p) for p in data["n"]],
    "Beta": [F(mpmath.betainc(mpmath.mpf(c["A"]), mpmath.mpf(c["B"]), 0, mpmath.mpf(c["X"]), regularized=True)) for c in data["b"]],
}))
`, &ref, "mpmath")

	const tiny = 0x1p-53
	for i, x := range gx {
		g, _ := Lgamma(x)
		w := ref.Lgamma[i]
		if math.Abs(w) > 0.5 && ulps(g, w) > 2 || math.Abs(w) <= 0.5 && math.Abs(g-w) > math.Max(tiny, 2*ulp(w)) {
			t.Errorf("Lgamma(%v) = %v, mpmath %v", x, g, w)
		}
	}
	for i, x := range tx {
		for _, c := range []struct {
			name      string
			got, want float64
		}{{"Sin", Sin(x), ref.Sin[i]}, {"Cos", Cos(x), ref.Cos[i]}} {
			if math.Abs(c.want) > 0.5 && ulps(c.got, c.want) > 1 || math.Abs(c.want) <= 0.5 && math.Abs(c.got-c.want) > math.Max(tiny, ulp(c.want)) {
				t.Errorf("%s(%v) = %v, mpmath %v", c.name, x, c.got, c.want)
			}
		}
	}
	for i := range hp {
		if g := Hypot(hp[i], hq[i]); ulps(g, ref.Hypot[i]) > 1 {
			t.Errorf("Hypot(%v, %v) = %v, mpmath %v", hp[i], hq[i], g, ref.Hypot[i])
		}
	}
	for i, p := range np {
		if g := NormalQuantile(p); ulps(g, ref.NormalQuantile[i]) > 4 && math.Abs(g-ref.NormalQuantile[i]) > tiny {
			t.Errorf("NormalQuantile(%v) = %v, mpmath %v: %v ulp", p, g, ref.NormalQuantile[i], ulps(g, ref.NormalQuantile[i]))
		}
	}
	for i, c := range bs {
		g, w := BetaRegularized(c.A, c.B, c.X), ref.Beta[i]
		if math.Abs(g-w) > 1e-13*math.Abs(w) {
			t.Errorf("BetaRegularized(%v, %v, %v) = %v, mpmath %v", c.A, c.B, c.X, g, w)
		}
		if w < 1e-300 || w > 1-1e-12 {
			continue // the inverse of a flat end is ill-posed
		}
		x := BetaRegularizedInverse(c.A, c.B, w)
		if back := BetaRegularized(c.A, c.B, x); math.Abs(back-w) > 1e-12*w {
			t.Errorf("BetaRegularizedInverse(%v, %v, %v) = %v, which gives back %v", c.A, c.B, w, x, back)
		}
	}
}

// ulp is the spacing of doubles at |x|.
func ulp(x float64) float64 {
	x = math.Abs(x)
	return math.Nextafter(x, math.Inf(1)) - x
}
