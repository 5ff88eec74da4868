package pipeline

import (
	"errors"
	"fmt"

	"gridstage/manifests"
	"gridstage/plugin"
	"gridstage/solver"
)

// differentiable is a process model whose chains have parameter
// sensitivities (solver.AR1).
type differentiable interface {
	Sensitivities(solver.Settings) (*solver.Chain, *solver.Sensitivity, error)
}

// attachSensitivities rebuilds the chain of d from its canonical spec,
// differentiates it and attaches the derivatives, after checking that the
// rebuilt chain is the one d holds, bit for bit: the derivatives belong to
// the chain the stage receives, whatever built the file. A chain whose
// process has no sensitivities (a baseline method, a VAR, …) is left
// without them; the stage says so if its model needs them.
func attachSensitivities(d *plugin.ChainData) error {
	job, err := manifests.ParseSpec(d.Spec)
	if err != nil {
		return fmt.Errorf("its file's spec does not parse: %w", err)
	}
	prob, err := job.Build()
	if err != nil {
		return err
	}
	m, ok := prob.Model.(differentiable)
	if !ok {
		return nil
	}
	c, sens, err := m.Sensitivities(prob.Settings)
	if errors.Is(err, solver.ErrNoSensitivities) {
		return nil
	}
	if err != nil {
		return err
	}
	if len(c.Transition) != len(d.Transition) || len(c.Grid) != len(d.Grid) {
		return errors.New("the chain rebuilt from its spec has another shape than the chain in its file")
	}
	for k := range c.Transition {
		if c.Transition[k] != d.Transition[k] {
			return fmt.Errorf("the chain rebuilt from its spec differs from the file's at transition entry %d (another numeric version?)", k)
		}
	}
	for k, name := range sens.Params {
		d.Sensitivities = append(d.Sensitivities, plugin.Sensitivity{Param: name, Grid: sens.Grid[k], Transition: sens.Transition[k], Stationary: sens.Stationary[k]})
	}
	return nil
}
