package solver

import "testing"

// TestAdviceBothDirections: for a Gaussian AR(1) on the even grid the
// advised N carries the moments (Carries) and N − 2 does not, and so does
// no smaller N (the search is exhaustive from 2).
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
		if adv.States == 0 {
			t.Logf("rho=%g L=%d: %s", tc.rho, tc.L, adv)
			continue
		}
		for _, n := range []int{adv.States, adv.States - 2} {
			if n < 2 {
				continue
			}
			s.States = n
			c, err := p.Discretize(s)
			if err != nil {
				t.Fatal(err)
			}
			if got, want := Carries(c), n == adv.States; got != want {
				t.Errorf("rho=%g L=%d N=%d: carries %v, want %v (advised %d)", tc.rho, tc.L, n, got, want, adv.States)
			}
		}
		t.Logf("rho=%g L=%d: advised %d states", tc.rho, tc.L, adv.States)
	}
}
