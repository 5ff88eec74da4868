package manifests

import (
	"sort"

	"gridstage/solver"
)

// Model is a process the solver can discretize: it gives the chain for a
// set of settings and the exact moments the chain is judged against.
// solver.AR1 is a Model; kinds whose solver type returns something other
// than a chain wrap it (see iidModel).
type Model interface {
	solver.Truth
	Discretize(solver.Settings) (*solver.Chain, error)
}

// kindSpec is the part of a process that depends on its kind. Adding a
// kind means writing one file with a type that implements kindSpec and
// registering it with registerKind in that file's init.
type kindSpec interface {
	// decode reads the kind's own keys from the process mapping.
	decode(m *mapping)
	// clone returns a deep copy: each sweep point changes its own copy.
	clone() kindSpec
	// params registers the numeric parameters a sweep may set, by the
	// name a manifest uses (e.g. "rho", "innovation.nu").
	params(add func(name string, n *num))
	// check fills defaults and validates the kind's values; at is the
	// process mapping, for missing keys. It reports false on any error.
	check(r *reporter, at loc) bool
	// methods lists the methods the kind accepts; the first is the default.
	methods() []solver.Method
	// baselines lists the methods a process may be compared with, and
	// defaultBaseline picks one for main method m (false: none).
	baselines() []solver.Method
	defaultBaseline(m solver.Method) (solver.Method, bool)
	// momentLimit returns how many conditional moments maxent can match
	// and, when that is fewer than 8, why. Valid after check passed.
	momentLimit() (int, string)
	// rules checks rules between the kind's values and the settings.
	rules(r *reporter, p *processSpec) bool
	// canonical adds the kind's fields to a job's canonical spec.
	canonical(o object)
	// model returns the solver's process. Valid after check passed.
	model() Model
}

// kindInfo registers a kind: its name, the keys it adds to a process
// mapping, and a constructor.
type kindInfo struct {
	name string
	keys []string
	new  func() kindSpec
}

var kinds []kindInfo

// registerKind adds a process kind; it panics on a repeated name.
func registerKind(k kindInfo) {
	for _, o := range kinds {
		if o.name == k.name {
			panic("manifests: kind " + k.name + " registered twice")
		}
	}
	kinds = append(kinds, k)
	sort.Slice(kinds, func(i, j int) bool { return kinds[i].name < kinds[j].name })
}

func kindNames() []string {
	out := make([]string, len(kinds))
	for i, k := range kinds {
		out[i] = k.name
	}
	return out
}

func lookupKind(name string) (kindInfo, bool) {
	for _, k := range kinds {
		if k.name == name {
			return k, true
		}
	}
	return kindInfo{}, false
}

// Kinds lists the process kinds a manifest may use.
func Kinds() []string { return kindNames() }

// Optional interfaces a kindSpec may implement for what the common keys
// cannot express.

// settingsKind adds the kind's own fields to the solver settings once the
// common keys are checked (the VAR's grid axes).
type settingsKind interface {
	settings(s *solver.Settings)
}

// momentDefaulter gives the number of moments maxent matches when the
// manifest sets none (a VAR: 2, means and covariances); without it the
// default is 4, or fewer when the law lacks them.
type momentDefaulter interface {
	defaultMoments() int
}

// compositeKind marks a kind whose components carry their own settings
// (product): the common settings keys do not apply to it, it has no
// baseline, and its canonical spec has no method or states of its own.
type compositeKind interface {
	composite()
}

// ageKind marks a kind whose chain changes with age (lifecycle, and a
// product with a life-cycle component): Build sets Problem.AgeModel
// instead of Problem.Model when ageModel returns one.
type ageKind interface {
	ageModel() AgeModel
}

// stateCounter gives the number of states of the kind's chain for the
// checked settings, when that is not simply the states key (a VAR has
// states per axis). Valid after check passed.
type stateCounter interface {
	chainStates(s solver.Settings) int
}

// componentKinds are the kinds a product may combine.
var componentKinds = []string{"ar1", "ar1-volatility", "iid", "var", "lifecycle"}

// ageComponentKinds are the kinds a product with a life-cycle component
// may combine: univariate ones, so that the product's diagnostics can
// describe the sum of its coordinates (log income as a persistent plus a
// transitory part).
var ageComponentKinds = []string{"ar1", "iid", "lifecycle"}
