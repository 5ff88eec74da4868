package manifests

import (
	"fmt"
	"math"

	"gridstage/solver"
)

// differentiable says, for each kind whose chains have parameter
// sensitivities (solver.AR1.Sensitivities, solver.VAR.Sensitivities,
// solver.IID.Sensitivities), which of its settings allow
// them: the reason they do not, or "".
var differentiable = map[string]func(p *processSpec) string{
	"ar1": func(p *processSpec) string {
		a := p.spec.(*ar1Spec)
		if fam := a.innovation.fam.name; fam != "normal" && fam != "t" {
			return fmt.Sprintf("the innovation is %s: sensitivities need a law whose log density has a derivative in closed form here (innovation normal or t)", fam)
		}
		return ""
	},
	// VAR.Sensitivities: every intercept, coef and cov entry. Principal
	// axes at a repeated eigenvalue of the stationary covariance have no
	// derivative; that is found when the chain is built, and the job
	// fails saying so.
	"var": func(*processSpec) string { return "" },
	// IID.Sensitivities: every parameter of a normal, log-normal, Student t
	// or Laplace law; a shape parameter (t's nu, the log-normal's log_sd)
	// moves the quantiles, so not on equal-mass nodes.
	"iid": func(p *processSpec) string {
		l := p.spec.(*iidSpec).dist
		if l == nil || l.fam == nil {
			return "" // reported already
		}
		switch fam := l.fam.name; fam {
		case "normal", "laplace":
			return ""
		case "t", "lognormal":
			if p.nodes.set && p.nodes.v == solver.NodesEqualMass.String() {
				return fmt.Sprintf("a %s law's shape moves the quantiles of equal-mass nodes, which have no derivative here: want nodes lattice, gauss-legendre or gauss-hermite", fam)
			}
			return ""
		default:
			return fmt.Sprintf("the distribution is %s: sensitivities need a normal, lognormal, t or laplace law here", fam)
		}
	},
}

// checkSensitivities reports a process asking for sensitivities its chains
// do not have: its kind, method or innovation law, named with the field.
func (p *processSpec) checkSensitivities(r *reporter) {
	if p.spec == nil || p.method.bad {
		return // the kind or method is wrong, and reported
	}
	at := p.sensitivities.at
	rule, ok := differentiable[p.kind.v]
	if !ok {
		r.add(at, ErrRule, "kind %s has no parameter sensitivities in this version: want kind %s, or leave sensitivities out", p.kind.v, sensitivityKinds())
		return
	}
	if _, composite := p.spec.(compositeKind); !composite && p.chosenMethod() != solver.MaxEnt {
		m := p.chosenMethod()
		r.add(at, ErrRule, "method %s has no parameter sensitivities: they differentiate the maximum-entropy dual (method maxent)", m)
		return
	}
	if why := rule(p); why != "" {
		r.add(at, ErrRule, "%s", why)
	}
}

func sensitivityKinds() string {
	s := ""
	for _, k := range kindNames() {
		if _, ok := differentiable[k]; ok {
			if s != "" {
				s += ", "
			}
			s += k
		}
	}
	return s
}

// ErrNoSensitivities reports a job whose chains have no parameter
// sensitivities (its kind, method or innovation law; see solver).
var ErrNoSensitivities = solver.ErrNoSensitivities

// differentiableModel is a process model whose chains have parameter
// sensitivities.
type differentiableModel interface {
	Sensitivities(solver.Settings) (*solver.Chain, *solver.Sensitivity, error)
}

// Sensitivities rebuilds the job's chain with its derivatives with
// respect to the process's parameters and checks, bit for bit, that the
// rebuilt chain is chain (the one solved, cached or read from a file): the
// derivatives then belong to that chain, whatever built it. It returns an
// error wrapping ErrNoSensitivities for a job whose chains have none.
func (j Job) Sensitivities(chain *solver.Chain) (*solver.Sensitivity, error) {
	prob, err := j.Build()
	if err != nil {
		return nil, err
	}
	m, ok := prob.Model.(differentiableModel)
	if !ok {
		return nil, fmt.Errorf("kind %s: %w", j.Kind, ErrNoSensitivities)
	}
	c, sens, err := m.Sensitivities(prob.Settings)
	if err != nil {
		return nil, err
	}
	if len(c.Transition) != len(chain.Transition) || len(c.Grid) != len(chain.Grid) {
		return nil, fmt.Errorf("the chain rebuilt for its sensitivities has %d states, the chain given %d", c.States(), chain.States())
	}
	for k := range c.Transition {
		if c.Transition[k] != chain.Transition[k] {
			return nil, fmt.Errorf("the chain rebuilt for its sensitivities differs from the chain given at transition entry %d (another numeric version?)", k)
		}
	}
	for k := range c.Grid {
		if c.Grid[k] != chain.Grid[k] {
			return nil, fmt.Errorf("the chain rebuilt for its sensitivities differs from the chain given at grid value %d (another numeric version?)", k)
		}
	}
	// No non-finite number reaches a file: a derivative that overflows
	// (multipliers near a hull's facet under the exact policy) fails the job.
	for k, name := range sens.Params {
		for _, part := range [][]float64{sens.Grid[k], sens.Transition[k], sens.Stationary[k]} {
			for _, v := range part {
				if math.IsNaN(v) || math.IsInf(v, 0) {
					return nil, fmt.Errorf("the derivative in %s is not finite at these parameters (a state on the edge of what its grid can carry; matching: smooth avoids it)", name)
				}
			}
		}
	}
	return sens, nil
}

// Sensitivities differentiates every component (each must have
// sensitivities) and combines them as solver.Product combines the
// chains; parameters are named components[i].<name>, as a sweep names
// them.
func (m productModel) Sensitivities(solver.Settings) (*solver.Chain, *solver.Sensitivity, error) {
	chains := make([]*solver.Chain, len(m.Parts))
	sens := make([]*solver.Sensitivity, len(m.Parts))
	prefix := make([]string, len(m.Parts))
	for i, p := range m.Parts {
		d, ok := p.(differentiableModel)
		if !ok {
			return nil, nil, fmt.Errorf("components[%d]: %w", i, ErrNoSensitivities)
		}
		c, s, err := d.Sensitivities(m.Settings[i])
		if err != nil {
			return nil, nil, fmt.Errorf("components[%d]: %w", i, err)
		}
		chains[i], sens[i], prefix[i] = c, s, fmt.Sprintf("components[%d].", i)
	}
	ps, err := solver.ProductSensitivities(chains, sens, prefix)
	if err != nil {
		return nil, nil, err
	}
	return solver.Product(chains...), ps, nil
}

// productRule: every component's own, for a product of ar1, iid and var
// components (solver.ProductSensitivities). It is registered in init, as
// it looks components up in differentiable.
func productRule(p *processSpec) string {
	for i, part := range p.spec.(*productSpec).parts {
		if part == nil || part.spec == nil {
			return "" // reported already
		}
		rule, ok := differentiable[part.kind.v]
		switch {
		case !ok || part.kind.v == "product":
			return fmt.Sprintf("components[%d] is kind %s, which has no parameter sensitivities in this version: want components of kinds ar1, iid, var", i, part.kind.v)
		case part.chosenMethod() != solver.MaxEnt:
			return fmt.Sprintf("components[%d] has method %s: sensitivities differentiate the maximum-entropy dual (method maxent)", i, part.chosenMethod())
		}
		if why := rule(part); why != "" {
			return fmt.Sprintf("components[%d]: %s", i, why)
		}
	}
	return ""
}

func init() { differentiable["product"] = productRule }
