package main

import (
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"regexp"
	"strings"

	"gridstage/batch"
	"gridstage/internal/version"
	"gridstage/manifests"
)

// provenance identifies a chain made on the command line exactly as `run`
// identifies the same process in run.json: the canonical spec, its spec
// hash, the chain hash, and the numeric and tool versions.
type provenance struct {
	Spec      json.RawMessage `json:"spec"`
	SpecHash  string          `json:"spec_hash"`
	ChainHash string          `json:"chain_hash"`
	Numeric   string          `json:"numeric_version"`
	Tool      string          `json:"tool_version"`
	// AutoStates is the number of states --states auto chose (the spec
	// holds it as states); 0 when --states gave it.
	AutoStates int `json:"auto_states,omitempty"`
}

// solveEntry discretizes a process given as a manifest process entry (the
// flags of `discretize` turned into manifest keys) through the same path as
// `run`: canonical spec and spec hash from package manifests, then the
// job's solve. The flags were checked before, so an error here is a flag
// combination the manifest rules reject; it is reported as bad input. The
// string is the grid advice for the fallback warning (Problem.FallbackAdvice),
// empty when nothing fell back.
func solveEntry(entry map[string]any) (manifests.Solution, provenance, string, error) {
	var none manifests.Solution
	b, err := json.Marshal(entry)
	if err != nil {
		return none, provenance{}, "", err
	}
	job, err := manifests.ParseSpec(b)
	if err != nil {
		return none, provenance{}, "", entryError(err)
	}
	prob, err := job.Build()
	if err != nil {
		return none, provenance{}, "", err
	}
	sol, err := prob.Solve()
	if err != nil {
		return none, provenance{}, "", flagError(err, paramFlags)
	}
	spec, err := job.Spec()
	if err != nil {
		return none, provenance{}, "", err
	}
	return sol, provenance{Spec: json.RawMessage(spec), SpecHash: job.SpecHash,
			ChainHash: batch.ChainHash(job, sol), Numeric: version.Numeric, Tool: version.Tool, AutoStates: job.AutoStates},
		prob.FallbackAdvice(sol, 0), nil
}

// printText ends the text output with the chain's identity.
func (p provenance) printText(w io.Writer) {
	if p.AutoStates > 0 {
		fmt.Fprintf(w, "\nstates: auto chose %d, the smallest number whose chain matches the moments in every state holding at least 0.1%% of the stationary mass\n", p.AutoStates)
	}
	fmt.Fprintf(w, "\nspec hash %s\nchain hash %s\nnumeric version %s, gridstage %s\n", p.SpecHash, p.ChainHash, p.Numeric, p.Tool)
}

// entryError reports the first problem the manifest rules find with the
// flags' process as bad input naming the flag. Flags carry the manifest's
// names with - for _, but for a mixture's components, which are repeated
// --component flags.
func entryError(err error) error {
	var list manifests.ErrorList
	if !errors.As(err, &list) || len(list) == 0 || list[0].Field == "" {
		return badInput("these flags describe no valid process: %v", err)
	}
	e := list[0]
	path := strings.Split(e.Field, ".")
	key := path[len(path)-1]
	switch {
	case strings.Contains(e.Field, "components"):
		key = "component"
	case key == "law":
		key = path[0] // --innovation or --distribution
	}
	return badInput("--%s %s", strings.ReplaceAll(indexPart.ReplaceAllString(key, ""), "_", "-"), e.Msg)
}

var indexPart = regexp.MustCompile(`\[\d+\]`)
