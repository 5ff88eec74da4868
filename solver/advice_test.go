package solver

import (
	"strings"
	"testing"
)

// checkAdviceBothDirections: the advised states setting carries the
// moments (Carries) and two fewer does not; the search is exhaustive from
// 2, so no smaller setting does either.
func checkAdviceBothDirections(t *testing.T, name string, adv Advice, carries func(n int) bool) {
	t.Helper()
	if adv.States == 0 {
		t.Logf("%s: %s", name, adv)
		return
	}
	for _, n := range []int{adv.States, adv.States - 2} {
		if n < 2 {
			continue
		}
		if got, want := carries(n), n == adv.States; got != want {
			t.Errorf("%s N=%d: carries %v, want %v (advised %d)", name, n, got, want, adv.States)
		}
	}
	t.Logf("%s: %s", name, adv)
}

// TestAdviceBothDirections: for a Gaussian AR(1) on the even grid the
// advised N carries the moments and N − 2 does not.
func TestAdviceBothDirections(t *testing.T) {
	for _, tc := range []struct {
		rho float64
		L   int
	}{{0.9, 4}, {0.99, 4}, {0.995, 4}, {0.99, 2}} {
		p := AR1{Rho: tc.rho, Sigma: 0.1}
		s := Settings{Moments: tc.L}
		adv, err := p.Advise(s, 0)
		if err != nil {
			t.Fatal(err)
		}
		checkAdviceBothDirections(t, "ar1", adv, func(n int) bool {
			s.States = n
			c, err := p.Discretize(s)
			if err != nil {
				t.Fatal(err)
			}
			return Carries(c)
		})
	}
}

// TestAdviceVARBothDirections: the same for VARs, per axis, with
// covariances (2 moments) and with the marginal third and fourth moments
// (4), on principal and coordinate axes.
func TestAdviceVARBothDirections(t *testing.T) {
	for _, tc := range []struct {
		name string
		p    VAR
		s    Settings
	}{
		{"persistent 2-D, 2 moments", varPersistent, Settings{Moments: 2}},
		{"persistent 2-D, coordinate axes", varPersistent, Settings{Moments: 2, Axes: AxesCoordinate}},
		{"moderate 2-D, 4 moments", varModerate, Settings{Moments: 4}},
	} {
		adv, err := tc.p.Advise(tc.s, 0)
		if err != nil {
			t.Fatal(err)
		}
		if adv.States > 0 && adv.Total != adv.States*adv.States {
			t.Errorf("%s: total %d, want %d", tc.name, adv.Total, adv.States*adv.States)
		}
		s := tc.s
		checkAdviceBothDirections(t, tc.name, adv, func(n int) bool {
			s.States = n
			c, err := tc.p.Discretize(s)
			if err != nil {
				t.Fatal(err)
			}
			return Carries(c)
		})
	}
}

// TestAdviceLifeCycle: life-cycle advice judges each age by its marginal
// mass, in both directions.
func TestAdviceLifeCycle(t *testing.T) {
	p := LifeCycle{InitialSD: 0.3, Rho: []float64{0.99, 0.99, 0.99}, Sigma: []float64{0.05, 0.05, 0.05}}
	s := Settings{Moments: 4}
	adv, err := p.Advise(s, 0)
	if err != nil {
		t.Fatal(err)
	}
	checkAdviceBothDirections(t, "lifecycle", adv, func(n int) bool {
		s.States = n
		a, err := p.Discretize(s)
		if err != nil {
			t.Fatal(err)
		}
		return CarriesAges(a)
	})
	if !strings.Contains(adv.String(), "its age's mass") {
		t.Errorf("advice %q does not name the marginal mass", adv)
	}
}

// TestAdviceWidth: with a fixed width at which no number of states up to
// the cap carries the moments, the advice names a width that does at the
// requested number of states (checked by solving it), or says none in the
// range does.
func TestAdviceWidth(t *testing.T) {
	p := AR1{Rho: 0.5, Sigma: 0.1}
	s := Settings{States: 7, Moments: 4, Width: 6}
	adv, err := p.Advise(s, 7)
	if err != nil {
		t.Fatal(err)
	}
	if adv.States != 0 {
		t.Fatalf("width 8 carries at %d states; the test needs a width that does not", adv.States)
	}
	if adv.Width == 0 {
		t.Fatalf("no width advised: %s", adv)
	}
	s.Width = adv.Width
	c, err := p.Discretize(s)
	if err != nil {
		t.Fatal(err)
	}
	if !Carries(c) {
		t.Errorf("advised width %g does not carry: matched %v", adv.Width, c.Matched)
	}
	// The search goes outward from the requested width in steps of 0.1, so
	// the width 0.1 closer to it must not carry.
	s.Width = adv.Width + 0.1
	if c, err = p.Discretize(s); err != nil {
		t.Fatal(err)
	}
	if Carries(c) {
		t.Errorf("width %g carries too, yet %g was advised", s.Width, adv.Width)
	}
	t.Log(adv)
}
