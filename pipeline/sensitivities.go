package pipeline

import (
	"errors"
	"fmt"

	"gridstage/manifests"
	"gridstage/plugin"
	"gridstage/solver"
)

// attachSensitivities rebuilds the chain of d from its canonical spec,
// differentiates it and attaches the derivatives, after checking that the
// rebuilt chain is the one d holds, bit for bit (manifests.Job.Sensitivities):
// the derivatives belong to the chain the stage receives, whatever built the
// file. A chain whose process has no sensitivities (a baseline method, an
// iid law, a VAR on principal axes at a repeated eigenvalue, …) is left
// without them; the stage says so if its model needs them.
func attachSensitivities(d *plugin.ChainData) error {
	job, err := manifests.ParseSpec(d.Spec)
	if err != nil {
		return fmt.Errorf("its file's spec does not parse: %w", err)
	}
	sens, err := job.Sensitivities(&solver.Chain{Dim: d.Dim, Grid: d.Grid, Transition: d.Transition})
	if errors.Is(err, manifests.ErrNoSensitivities) || errors.Is(err, solver.ErrNotDifferentiable) {
		return nil
	}
	if err != nil {
		return err
	}
	for k, name := range sens.Params {
		d.Sensitivities = append(d.Sensitivities, plugin.Sensitivity{Param: name, Grid: sens.Grid[k], Transition: sens.Transition[k], Stationary: sens.Stationary[k]})
	}
	return nil
}
