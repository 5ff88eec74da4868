package portablemath

import (
	"math"
	"math/rand/v2"
	"strconv"
	"testing"

	"gridstage/internal/pyref"
)

// ulps returns the distance between a and b in units in the last place
// (the number of doubles between them).
func ulps(a, b float64) float64 {
	if a == b {
		return 0
	}
	if math.IsNaN(a) || math.IsNaN(b) || math.Signbit(a) != math.Signbit(b) {
		return math.Inf(1)
	}
	ia, ib := int64(math.Float64bits(math.Abs(a))), int64(math.Float64bits(math.Abs(b)))
	d := ia - ib
	if d < 0 {
		d = -d
	}
	return float64(d)
}

// TestAgainstMpmath compares every function with mpmath at 50 significant
// digits, rounded to the nearest double (Debian's python3-mpmath). Tolerance
// 1 ulp, the error bound fdlibm states for exp, log, expm1, log1p, erf,
// sinh and cosh, from which these routines come; Erfc's and Pow's are
// below.
func TestAgainstMpmath(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 12))
	var xs, ys []float64
	add := func(x, y float64) { xs, ys = append(xs, x), append(ys, y) }
	for i := 0; i < 400; i++ {
		add(rng.Float64()*80-40, 0)
	}
	for _, x := range []float64{-745, -700, -30, -1, -0.5, -1e-9, 0, 1e-300, 1e-9, 0.34657359, 0.5, 1, 2, 6, 27, 30, 700, 709} {
		add(x, 0)
	}
	// Pow: bases in (0, 50], exponents the solver uses (k/2 for moments,
	// integers for powers of ρ) and random ones.
	var pxs, pys []float64
	for i := 0; i < 300; i++ {
		pxs = append(pxs, rng.Float64()*50)
		pys = append(pys, rng.Float64()*20-10)
	}
	for _, y := range []float64{0.5, 1.5, 2, 3, -2, 10, 2.5, 1.0 / 3} {
		for _, x := range []float64{0.3, 0.99, 1.7, 3, 12.5} {
			pxs, pys = append(pxs, x), append(pys, y)
		}
	}
	var ref struct {
		Exp, Expm1, Log, Log1p, Erf, Erfc, Sinh, Cosh, Pow []*float64 // nil: overflow
	}
	pyref.Eval(t, map[string]any{"x": xs, "px": pxs, "py": pys}, `
mpmath.mp.dps = 50
def f(fn, xs):
    out = []
    for x in xs:
        try:
            v = float(fn(mpmath.mpf(x)))
            out.append(None if v in (float("inf"), float("-inf")) else v)
        except (ValueError, ZeroDivisionError):
            out.append(None)
    return out
x = data["x"]
pos = [abs(v) + 1e-300 for v in x]
print(json.dumps({
    "Exp": f(mpmath.exp, x),
    "Expm1": f(mpmath.expm1, x),
    "Log": f(mpmath.log, pos),
    "Log1p": f(lambda v: mpmath.log1p(abs(v)), x),
    "Erf": f(mpmath.erf, x),
    "Erfc": f(mpmath.erfc, x),
    "Sinh": f(mpmath.sinh, x),
    "Cosh": f(mpmath.cosh, x),
    "Pow": [float(mpmath.power(mpmath.mpf(a), mpmath.mpf(b))) for a, b in zip(data["px"], data["py"])],
    # Pow's values stay finite for these arguments.
}))
`, &ref, "mpmath")

	check := func(name string, got func(i int) float64, want []*float64, arg func(i int) string, tol func(i int) float64) {
		t.Helper()
		worst := 0.0
		for i, wp := range want {
			g := got(i)
			if wp == nil {
				if !math.IsInf(g, 0) {
					t.Errorf("%s(%s) = %v, mpmath overflows", name, arg(i), g)
				}
				continue
			}
			w := *wp
			if math.Abs(w) < 0x1p-1022 { // subnormal: absolute, half the smallest normal
				if math.Abs(g-w) > 0x1p-1074 {
					t.Errorf("%s(%s) = %v, mpmath %v", name, arg(i), g, w)
				}
				continue
			}
			u := ulps(g, w)
			worst = math.Max(worst, u)
			if u > tol(i) {
				t.Errorf("%s(%s) = %v, mpmath %v: %v ulp", name, arg(i), g, w, u)
			}
		}
		t.Logf("%s: %d points, largest error %v ulp", name, len(want), worst)
	}
	x := func(i int) string { return fmtf(xs[i]) }
	one := func(int) float64 { return 1 }
	// Pow follows package math: x**y = x**yf · x**yi, the integer part by
	// repeated squaring, one rounding per squaring and per product (two
	// per bit of |yi|) on top of 1 ulp for exp(yf·log x).
	powTol := func(i int) float64 { return 1 + 2*math.Ceil(math.Log2(math.Abs(pys[i])+1)) }
	pos := func(i int) float64 { return math.Abs(xs[i]) + 1e-300 }
	check("Exp", func(i int) float64 { return Exp(xs[i]) }, ref.Exp, x, one)
	check("Expm1", func(i int) float64 { return Expm1(xs[i]) }, ref.Expm1, x, one)
	check("Log", func(i int) float64 { return Log(pos(i)) }, ref.Log, func(i int) string { return fmtf(pos(i)) }, one)
	check("Log1p", func(i int) float64 { return Log1p(math.Abs(xs[i])) }, ref.Log1p, x, one)
	check("Erf", func(i int) float64 { return Erf(xs[i]) }, ref.Erf, x, one)
	// Erfc beyond |x| ≈ 0.84 multiplies two exponentials and divides by x:
	// up to 3 ulp (measured 2 on these points).
	check("Erfc", func(i int) float64 { return Erfc(xs[i]) }, ref.Erfc, x, func(int) float64 { return 3 })
	check("Sinh", func(i int) float64 { return Sinh(xs[i]) }, ref.Sinh, x, one)
	check("Cosh", func(i int) float64 { return Cosh(xs[i]) }, ref.Cosh, x, one)
	check("Pow", func(i int) float64 { return Pow(pxs[i], pys[i]) }, ref.Pow, func(i int) string { return fmtf(pxs[i]) + ", " + fmtf(pys[i]) }, powTol)
}

// TestSpecialCases: the IEEE special values behave as package math
// documents them (exact, no tolerance).
func TestSpecialCases(t *testing.T) {
	inf, nan := math.Inf(1), math.NaN()
	for _, c := range []struct {
		name      string
		got, want float64
	}{
		{"Exp(+Inf)", Exp(inf), inf}, {"Exp(-Inf)", Exp(-inf), 0}, {"Exp(710)", Exp(710), inf}, {"Exp(-746)", Exp(-746), 0},
		{"Exp(0)", Exp(0), 1}, {"Log(1)", Log(1), 0}, {"Log(0)", Log(0), -inf}, {"Log(+Inf)", Log(inf), inf},
		{"Erfc(+Inf)", Erfc(inf), 0}, {"Erfc(-Inf)", Erfc(-inf), 2}, {"Erf(0)", Erf(0), 0},
		{"Pow(x, 0)", Pow(3.7, 0), 1}, {"Pow(2, 10)", Pow(2, 10), 1024}, {"Pow(0, 2)", Pow(0, 2), 0}, {"Pow(4, 0.5)", Pow(4, 0.5), 2},
		{"Expm1(0)", Expm1(0), 0}, {"Cosh(0)", Cosh(0), 1},
	} {
		if c.got != c.want {
			t.Errorf("%s = %v, want %v", c.name, c.got, c.want)
		}
	}
	for name, v := range map[string]float64{"Log(-1)": Log(-1), "Exp(NaN)": Exp(nan), "Pow(-2, 0.5)": Pow(-2, 0.5), "Erfc(NaN)": Erfc(nan)} {
		if !math.IsNaN(v) {
			t.Errorf("%s = %v, want NaN", name, v)
		}
	}
}

func fmtf(x float64) string { return strconvFloat(x) }

func strconvFloat(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }
