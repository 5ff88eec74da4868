package figures

// For returns every figure that applies to the case, in reading order:
// the stationary mass (univariate) or the plane (vector chains), the
// transition heat map unless every row is the same distribution (an iid
// law, which the first figure shows), and the moment errors when
// diagnostics exist. It
// fails only when the stationary distribution is not unique, which the
// first figure needs.
func For(c Case) ([]Figure, error) {
	checkChain(c.Chain)
	var figs []Figure
	if c.Chain.Dim == 1 {
		m, err := MassOf(c)
		if err != nil {
			return nil, err
		}
		figs = append(figs, massFigure(c, m))
	} else {
		pl, err := PlaneOf(c)
		if err != nil {
			return nil, err
		}
		figs = append(figs, planeFigure(c, pl))
	}
	if !independent(c.Chain) {
		figs = append(figs, flowFigure(c, FlowOf(c)))
	}
	if me, ok := MomentErrorsOf(c); ok {
		figs = append(figs, momentsFigure(c, me))
	}
	return append(figs, componentFigures(c)...), nil
}

// componentFigures returns the error figures of a vector chain's
// coordinates after the first, one per coordinate with checks in
// c.Components; the baseline is drawn for the first coordinate only, whose
// checks are stored with the chain.
func componentFigures(c Case) []Figure {
	if c.Chain.Dim < 2 || c.SumDiag {
		return nil
	}
	var figs []Figure
	for k := 1; k < min(len(c.Components), c.Chain.Dim); k++ {
		if c.Components[k] == nil {
			continue
		}
		cc := c
		cc.Diag, cc.BaselineDiag, cc.component = c.Components[k], nil, k
		if me, ok := MomentErrorsOf(cc); ok {
			figs = append(figs, momentsFigure(cc, me))
		}
	}
	return figs
}

// ForLifeCycle returns the life-cycle figure.
func ForLifeCycle(l LifeCycle) (Figure, error) {
	am, err := AgeMassOf(l)
	if err != nil {
		return Figure{}, err
	}
	return agesFigure(l, am, append([]float64(nil), l.Ages...)), nil
}

// ForAge returns the figures of one age of a life-cycle chain: the
// transition heat map and the moment errors. A single age's matrix moves
// between two different grids, so it has no stationary distribution of its
// own to draw; the life-cycle figure shows the mass by age instead.
func ForAge(c Case) []Figure {
	checkChain(c.Chain)
	figs := []Figure{flowFigure(c, FlowOf(c))}
	if me, ok := MomentErrorsOf(c); ok {
		figs = append(figs, momentsFigure(c, me))
	}
	return figs
}
