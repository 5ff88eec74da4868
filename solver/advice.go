package solver

import "fmt"

// AdviceMassFloor is the stationary mass below which a state's fallback
// does not count against a grid: states the chain visits less than 0.1 %
// of the time.
const AdviceMassFloor = 1e-3

// AdviceMaxStates is the largest number of states Advise tries by default.
const AdviceMaxStates = 201

// Advice says what grid would carry the requested moments.
type Advice struct {
	// States is the smallest number of states on the same grid rule and
	// width at which every state holding at least AdviceMassFloor of the
	// stationary mass matches all moments; 0 when none up to the cap does.
	States int
	// Cap is the largest number of states tried.
	Cap int
}

func (a Advice) String() string {
	if a.States == 0 {
		return fmt.Sprintf("no grid of up to %d states on this rule and width carries them in every state holding at least 0.1%% of the stationary mass", a.Cap)
	}
	return fmt.Sprintf("%d states on the same grid rule and width carry them in every state holding at least 0.1%% of the stationary mass", a.States)
}

// Carries reports whether the maximum-entropy chain c matches all its
// requested moments in every state holding at least AdviceMassFloor of its
// stationary mass (all states when the stationary law is not unique).
func Carries(c *Chain) bool {
	if c.Fallbacks() == 0 {
		return true
	}
	pi, err := Stationary(c.Transition, c.States())
	for i, m := range c.Matched {
		if m < c.Moments && (err != nil || pi[i] >= AdviceMassFloor) {
			return false
		}
	}
	return true
}

// Advise returns the smallest number of states from 2 to limit (0 means
// AdviceMaxStates) at which the AR(1) chain with settings s (States
// ignored) carries its moments (Carries). It solves one chain per
// candidate, so it is meant for warnings, not for inner loops.
func (p AR1) Advise(s Settings, limit int) (Advice, error) {
	if limit <= 0 {
		limit = AdviceMaxStates
	}
	adv := Advice{Cap: limit}
	for n := 2; n <= limit; n++ {
		s.States = n
		c, err := p.Discretize(s)
		if err != nil {
			return adv, err
		}
		if Carries(c) {
			adv.States = n
			return adv, nil
		}
	}
	return adv, nil
}
