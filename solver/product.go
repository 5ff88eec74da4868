package solver

import (
	"fmt"
	"math"
)

// Product returns the chain of independent components that move together:
// the state vector concatenates the components' vectors (the first
// component's coordinates first), and the transition is the Kronecker
// product
//
//	P = P₁ ⊗ P₂ ⊗ … ⊗ P_m,
//
// so state s = (i₁, …, i_m) is numbered row-major with the last component
// varying fastest. Dim is the sum of the components' Dims; Matched[s] and
// Moments are the smallest over the components, and Method is that of the
// first component. An i.i.d. component enters through Discrete.Chain. The
// components are not modified. Product panics if no chain is given.
//
// The stationary distribution of the product is the outer product of the
// components' stationary distributions; Independent gives the matching
// truth for DiagnoseVector.
func Product(parts ...*Chain) *Chain {
	if len(parts) == 0 {
		panic("solver: Product needs at least one chain")
	}
	out := parts[0]
	out = &Chain{Dim: out.Dim, Grid: append([]float64(nil), out.Grid...), Transition: append([]float64(nil), out.Transition...),
		Method: out.Method, Moments: out.Moments, Matched: make([]int, out.States())}
	for i := range out.Matched {
		out.Matched[i] = matchedAt(parts[0], i)
	}
	if parts[0].Certificates != nil {
		out.Certificates = append([]Certificate(nil), parts[0].Certificates...)
	}
	if parts[0].PriorKL != nil {
		out.PriorKL = append([]float64(nil), parts[0].PriorKL...)
	}
	for _, b := range parts[1:] {
		out = kron(out, b)
	}
	return out
}

// kron returns the product chain of a and b (b varying fastest).
func kron(a, b *Chain) *Chain {
	na, nb := a.States(), b.States()
	n, d := na*nb, a.Dim+b.Dim
	c := &Chain{Dim: d, Grid: make([]float64, n*d), Transition: make([]float64, n*n), Matched: make([]int, n),
		Method: a.Method, Moments: min(a.Moments, b.Moments), PriorKL: sumKL(a.PriorKL, b.PriorKL)}
	for i := 0; i < na; i++ {
		for k := 0; k < nb; k++ {
			s := i*nb + k
			copy(c.Grid[s*d:], a.State(i))
			copy(c.Grid[s*d+a.Dim:], b.State(k))
			c.Matched[s] = min(matchedAt(a, i), matchedAt(b, k))
			if a.Certificates != nil || b.Certificates != nil {
				if c.Certificates == nil {
					c.Certificates = make([]Certificate, n)
				}
				c.Certificates[s] = combineCerts(a.Certificate(i), b.Certificate(k))
			}
			row := c.Transition[s*n : (s+1)*n]
			rb := b.Row(k)
			for j, p := range a.Row(i) {
				seg := row[j*nb : (j+1)*nb]
				for m, q := range rb {
					seg[m] = float64(p * q)
				}
			}
		}
	}
	return c
}

// matchedAt returns c.Matched[i], or 0 when the chain keeps no record.
func matchedAt(c *Chain, i int) int {
	if c.Matched == nil {
		return 0
	}
	return c.Matched[i]
}

// AgePart is one component of a life-cycle product: a life-cycle chain
// (Ages) or a time-invariant chain (Chain), exactly one of them set.
type AgePart struct {
	Ages  *AgeChain
	Chain *Chain
}

// ProductAges combines independent components into one life-cycle chain
// (log income as a persistent life-cycle part plus a transitory part,
// say). At every age t the transition is the Kronecker product (Product)
// of the components' moves from age t: a life-cycle component's
// Ages[t], a time-invariant component's own chain; the final grid is the
// product of the components' final grids (a time-invariant component's
// grid at every age). The initial distribution is the outer product of the
// life-cycle components' initial distributions and the time-invariant
// components' stationary distributions: those enter the life cycle in
// their long-run law. InitialMoments and InitialMatched are the smallest
// over the life-cycle components, and Method is the first component's.
//
// Every life-cycle component must have the same number of transitions,
// and at least one component must be a life cycle; ProductAges panics
// otherwise or when a part sets both or neither field. It returns an error
// when a time-invariant component has no unique stationary distribution.
func ProductAges(parts ...AgePart) (*AgeChain, error) {
	T := -1
	for _, p := range parts {
		if (p.Ages == nil) == (p.Chain == nil) {
			panic("solver: ProductAges needs exactly one of Ages and Chain in every part")
		}
		if p.Ages != nil {
			if T >= 0 && p.Ages.Transitions() != T {
				panic("solver: ProductAges needs life cycles with the same number of ages")
			}
			T = p.Ages.Transitions()
		}
	}
	if T < 0 {
		panic("solver: ProductAges needs a life-cycle component")
	}
	out := &AgeChain{Ages: make([]*Chain, T), InitialMoments: math.MaxInt, InitialMatched: math.MaxInt}
	for t := 0; t < T; t++ {
		chains := make([]*Chain, len(parts))
		for k, p := range parts {
			chains[k] = p.Chain
			if p.Ages != nil {
				chains[k] = p.Ages.Ages[t]
			}
		}
		out.Ages[t] = Product(chains...)
	}
	var final, initial []float64
	dim := 0
	seenAges := false
	for k, p := range parts {
		var grid, law []float64
		d := 0
		if p.Ages != nil {
			grid, law, d = p.Ages.Final, p.Ages.Initial, p.Ages.Ages[0].Dim
			out.InitialMoments = min(out.InitialMoments, p.Ages.InitialMoments)
			out.InitialMatched = min(out.InitialMatched, p.Ages.InitialMatched)
			if seenAges {
				out.InitialCertificate = combineCerts(out.InitialCertificate, p.Ages.InitialCertificate)
			} else {
				out.InitialCertificate = p.Ages.InitialCertificate
			}
			seenAges = true
			if k == 0 {
				out.Method = p.Ages.Method
			}
		} else {
			pi, err := Stationary(p.Chain.Transition, p.Chain.States())
			if err != nil {
				return nil, fmt.Errorf("solver: component %d of the life-cycle product: %w", k, err)
			}
			grid, law, d = p.Chain.Grid, pi, p.Chain.Dim
			if k == 0 {
				out.Method = p.Chain.Method
			}
		}
		if k == 0 {
			final, initial, dim = append([]float64(nil), grid...), append([]float64(nil), law...), d
			continue
		}
		final, initial = outerGrid(final, dim, grid, d), outerLaw(initial, law)
		dim += d
	}
	out.Final, out.Initial = final, initial
	return out, nil
}

// outerGrid returns the product grid of a (da coordinates per state) and b
// (db), b varying fastest, as kron lays states out.
func outerGrid(a []float64, da int, b []float64, db int) []float64 {
	na, nb := len(a)/da, len(b)/db
	out := make([]float64, 0, na*nb*(da+db))
	for i := 0; i < na; i++ {
		for k := 0; k < nb; k++ {
			out = append(out, a[i*da:(i+1)*da]...)
			out = append(out, b[k*db:(k+1)*db]...)
		}
	}
	return out
}

// outerLaw returns the product distribution of a and b, b varying fastest.
func outerLaw(a, b []float64) []float64 {
	out := make([]float64, 0, len(a)*len(b))
	for _, p := range a {
		for _, q := range b {
			out = append(out, float64(p*q))
		}
	}
	return out
}
