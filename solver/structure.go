package solver

import "fmt"

// Structure classifies a chain's transition graph (an edge i → j for
// every P_ij > 0): the facts that decide whether it has one stationary
// distribution, which a modeller must not learn by accident.
type Structure struct {
	// Identity: every state stays where it is with probability one.
	Identity bool
	// Irreducible: every state reaches every other.
	Irreducible bool
	// ClosedClasses is the number of closed communicating classes (sets
	// the chain never leaves); the stationary distribution is unique iff
	// there is exactly one (Kemeny and Snell 1960, ch. 2).
	ClosedClasses int
	// Transient is the number of states outside every closed class.
	Transient int
	// class[i] is the index of state i's communicating class; closed[c]
	// whether class c is closed.
	class  []int
	closed []bool
}

// UniqueStationary reports whether the chain has exactly one stationary
// distribution.
func (s Structure) UniqueStationary() bool { return s.ClosedClasses == 1 }

// Degenerate returns why the chain is degenerate (identity, or
// reducible, with or without a unique stationary law), or "" for an
// irreducible chain.
func (s Structure) Degenerate() string {
	switch {
	case s.Irreducible:
		return ""
	case s.Identity:
		return "identity matrix: every state is absorbing, so the chain never moves and every distribution is stationary"
	case s.ClosedClasses > 1:
		return fmt.Sprintf("reducible: %d closed classes of states that never reach one another, so the stationary distribution is not unique", s.ClosedClasses)
	}
	if s.Transient == 1 {
		return "reducible: 1 transient state is left for good; the stationary distribution is unique but zero there"
	}
	return fmt.Sprintf("reducible: %d transient states are left for good; the stationary distribution is unique but zero there", s.Transient)
}

// Classify finds the communicating classes of the n×n row-stochastic
// matrix trans by Tarjan's (1972) strongly-connected-components
// algorithm (iterative, O(n²) over the dense matrix).
func Classify(trans []float64, n int) Structure {
	s := Structure{class: make([]int, n), Identity: n > 0}
	for i := 0; i < n; i++ {
		if trans[i*n+i] != 1 {
			s.Identity = false
		}
	}
	index := make([]int, n)
	low := make([]int, n)
	onStack := make([]bool, n)
	for i := range index {
		index[i] = -1
	}
	var stack []int
	next, classes := 0, 0
	type frame struct{ v, j int }
	for root := 0; root < n; root++ {
		if index[root] >= 0 {
			continue
		}
		calls := []frame{{root, 0}}
		index[root], low[root] = next, next
		next++
		stack = append(stack, root)
		onStack[root] = true
		for len(calls) > 0 {
			f := &calls[len(calls)-1]
			v := f.v
			if f.j < n {
				w := f.j
				f.j++
				if w == v || !(trans[v*n+w] > 0) {
					continue
				}
				if index[w] < 0 {
					index[w], low[w] = next, next
					next++
					stack = append(stack, w)
					onStack[w] = true
					calls = append(calls, frame{w, 0})
				} else if onStack[w] {
					low[v] = min(low[v], index[w])
				}
				continue
			}
			if low[v] == index[v] {
				for {
					w := stack[len(stack)-1]
					stack = stack[:len(stack)-1]
					onStack[w] = false
					s.class[w] = classes
					if w == v {
						break
					}
				}
				classes++
			}
			calls = calls[:len(calls)-1]
			if len(calls) > 0 {
				u := calls[len(calls)-1].v
				low[u] = min(low[u], low[v])
			}
		}
	}
	s.closed = make([]bool, classes)
	for c := range s.closed {
		s.closed[c] = true
	}
	for v := 0; v < n; v++ {
		for w := 0; w < n; w++ {
			if trans[v*n+w] > 0 && s.class[v] != s.class[w] {
				s.closed[s.class[v]] = false
			}
		}
	}
	for _, c := range s.closed {
		if c {
			s.ClosedClasses++
		}
	}
	for v := 0; v < n; v++ {
		if !s.closed[s.class[v]] {
			s.Transient++
		}
	}
	s.Irreducible = classes == 1
	return s
}
