package manifests

import "math"

// Range checks shared by every kind. Each reports at the value's own
// position and returns whether the value passed. A value whose type was
// wrong (n.bad) fails silently: it has been reported already.

// present reports whether n holds a value, reporting a missing key at the
// enclosing mapping at (with key appended to its path) when it does not.
func present(r *reporter, n num, at loc, key, want string) bool {
	if n.set {
		return true
	}
	if !n.bad {
		r.add(loc{pos: at.pos, path: joinKey(at.path, key)}, ErrMissing, "missing: want %s", want)
	}
	return false
}

func checkFinite(r *reporter, n num) bool {
	if n.bad {
		return false
	}
	if !isFinite(n.v) {
		r.add(n.at, ErrRange, "%s is out of range: want a finite number", n)
		return false
	}
	return true
}

func checkPositive(r *reporter, n num) bool {
	if n.bad {
		return false
	}
	if !(n.v > 0) || math.IsInf(n.v, 1) {
		r.add(n.at, ErrRange, "%s is out of range: want a finite number > 0", n)
		return false
	}
	return true
}

// checkAbove checks a finite n > lo.
func checkAbove(r *reporter, n num, lo float64, why string) bool {
	if n.bad {
		return false
	}
	if !(n.v > lo) || math.IsInf(n.v, 1) {
		r.add(n.at, ErrRange, "%s is out of range: want a finite number > %s%s", n, formatNumber(lo), why)
		return false
	}
	return true
}

// checkOpen checks lo < n < hi.
func checkOpen(r *reporter, n num, lo, hi float64) bool {
	if n.bad {
		return false
	}
	if !(n.v > lo && n.v < hi) {
		r.add(n.at, ErrRange, "%s is out of range: want a number in (%s, %s)", n, formatNumber(lo), formatNumber(hi))
		return false
	}
	return true
}

// checkInt checks that n is a whole number from lo to hi.
func checkInt(r *reporter, n num, lo, hi int) bool {
	if n.bad {
		return false
	}
	if !(n.v >= float64(lo) && n.v <= float64(hi)) || n.v != math.Trunc(n.v) {
		r.add(n.at, ErrRange, "%s is out of range: want an integer from %d to %d", n, lo, hi)
		return false
	}
	return true
}
