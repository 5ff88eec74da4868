package solver

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
		Method: a.Method, Moments: min(a.Moments, b.Moments)}
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
					seg[m] = p * q
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
