// Package manifests reads gridstage run manifests: what to compute, where the
// results go, and which parameters to sweep.
//
// A manifest is a YAML (or JSON) document with a run name, an output folder
// and format, and a list of named shock processes. Each process has a kind
// (ar1, iid, …), its parameters, discretization settings, a baseline method
// for diagnostics and, optionally, a sweep: Cartesian lists or ranges over
// numeric parameters and a table of parameter draws read from a CSV or
// Parquet file.
//
// Parsing validates everything at once and reports every problem with the
// file, line, column and field path (see Error and ErrorList). A valid
// manifest expands into jobs, one per process and sweep point. Each job has a
// canonical spec — a JSON object with sorted keys, normalised numbers and
// every default filled in — and a spec hash over that spec and the solver's
// numeric version (docs/HASHES.md). Job.Build turns a job into the solver's
// inputs.
//
// Process kinds plug in through the kind interface in kind.go: a new kind
// supplies its keys, parameters, checks, canonical fields and solver model.
package manifests
