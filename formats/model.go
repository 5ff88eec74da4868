package formats

import (
	"gridstage/solver"
)

// Header describes what every record of a Set shares.
type Header struct {
	// Run is the run name from the manifest.
	Run string
	// Process is the process name; it names the files, so it may hold only
	// letters, digits, '_', '-' and '.', and may not start with '.'.
	Process string
	// Kind is the process kind (ar1, ar1-volatility, iid, var, lifecycle, product).
	Kind string
	// Method is the discretization method of the primary chains.
	Method string
	// Dim is the dimension of each state vector (≥ 1).
	Dim int
	// Params lists the swept parameter names. The writer sorts a copy; every
	// record must give a value for each name and no other.
	Params []string
	// ManifestHash identifies the manifest the run came from (may be empty
	// for chains not made from a manifest).
	ManifestHash string
	// Tool is the gridstage version; empty means internal/version.Tool.
	Tool string
	// Numeric is the numeric version the chains were solved under, which
	// every spec hash of the set binds (docs/HASHES.md); empty means
	// internal/version.Numeric. A merge keeps its shards' version.
	Numeric string
	// Sensitivities adds the sensitivities table: every record with a
	// transition matrix must then carry Record.Sensitivities.
	Sensitivities bool
}

// Record is one chain of a Set: one sweep point at one age.
type Record struct {
	// Point is the sweep point index, ≥ 0. Records are appended in strictly
	// increasing (Point, Age) order.
	Point int
	// Params holds the swept parameter values of the point, by name.
	Params map[string]float64
	// Age is the age of a life-cycle chain (0 for time-invariant chains):
	// Chain.Grid is the grid at Age and Chain.Transition maps it to the grid
	// at Age+1.
	Age int
	// SpecHash and Spec are the point's spec hash and canonical spec; they
	// must be the same for every age of a point.
	SpecHash string
	Spec     []byte
	// ChainHash is set by the Reader: the point's chain hash from the
	// points table, which the Reader checks against the numbers once it has
	// read the point's last age. The Writer computes its own and ignores it.
	ChainHash string
	// Chain is the chain; its Grid has Header.Dim values per state. For the
	// last age of a life-cycle point, whose grid no transition leaves
	// (solver.AgeChain.Final), Transition is nil, Matched holds zeros and
	// Diag and Baseline are empty: only the states are written.
	Chain *solver.Chain
	// Initial is an optional distribution over this age's states (for
	// life-cycle chains, the distribution at entry); nil when absent.
	Initial []float64
	// Diag compares Chain with the true process. Its Stationary (nil when
	// not computed) is written with the states.
	Diag solver.Diagnostics
	// Baseline optionally compares a baseline method's chain on the same
	// number of states with the true process.
	Baseline *solver.Diagnostics
	// BaselineTransition is the baseline method's transition matrix,
	// row-major over the states of Baseline (its grid is the Level of each
	// of Baseline.States); required exactly when Baseline is set.
	BaselineTransition []float64
	// Vector optionally compares Chain with a vector process as a whole
	// (conditional mean vectors and covariance matrices, stationary
	// covariance); BaselineVector likewise for the baseline chain, and
	// requires Baseline. Nil for univariate processes and terminal ages.
	Vector, BaselineVector *VectorDiag
	// Sensitivities are the chain's derivatives with respect to its
	// process's parameters: required when the Header asks for them (except
	// at a terminal age), refused otherwise.
	Sensitivities *solver.Sensitivity
}

// Set is a whole output in memory: a header and its records in (Point, Age)
// order. Large sweeps should be streamed with a Writer and a Reader instead.
type Set struct {
	Header
	Records []Record
}
