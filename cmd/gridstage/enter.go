package main

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"os"
	"path/filepath"

	"github.com/spf13/cobra"

	"gridstage/internal/plural"
	"gridstage/pipeline"
	"gridstage/pipeline/lineage"
	"gridstage/plugin"
)

func init() { extraCommands = append(extraCommands, newEnterCmd) }

// enteredEstimate is the JSON a user's program writes for `gridstage enter`.
type enteredEstimate struct {
	Code struct {
		Name    string `json:"name"`
		Version string `json:"version"`
	} `json:"code"`
	Model  string             `json:"model"`
	Params map[string]float64 `json:"params"`
	Chains []struct {
		Path      string `json:"path"`
		Point     *int   `json:"point"`
		ChainHash string `json:"chain_hash"`
	} `json:"chains"`
	Scalars map[string]float64   `json:"scalars"`
	Vectors map[string][]float64 `json:"vectors"`
}

func newEnterCmd() *cobra.Command {
	var pipelineName string
	cmd := &cobra.Command{
		Use:   "enter LEDGER ESTIMATE.json",
		Short: "Enter an estimate computed by your own code into a lineage ledger",
		Long: `Enter into a lineage ledger an estimate computed outside the stage
protocol, by a program of your own that read gridstage's chain files.
ESTIMATE.json names the code, the chains it used and the values:

  {"code": {"name": "precaution.py", "version": "1.0"},
   "model": "buffer-stock", "params": {"beta": 0.95},
   "chains": [{"path": "out/chains/earnings.points.parquet", "point": 0,
               "chain_hash": "<the chain's hash, as run.json or inspect --json give it>"}],
   "scalars": {"target_wealth": 1.9}, "vectors": {}}

Chain paths are relative to the current folder (or absolute). Each chain
is verified (its file's hashes, the chain hash recomputed from the
numbers); then the estimate is written to estimates/<id>.json beside the
ledger and one ledger row per chain is appended, exactly as a pipeline
records a stage's estimate. "lineage --estimate ID" and "--chain HASH"
then answer for it. Values must be finite numbers.`,
		Args: cobra.ExactArgs(2),
		RunE: func(cmd *cobra.Command, args []string) error {
			ledger, file := args[0], args[1]
			b, err := os.ReadFile(file)
			if err != nil {
				return badInput("%s: cannot read the estimate: %v", file, errors.Unwrap(err))
			}
			var in enteredEstimate
			dec := json.NewDecoder(bytes.NewReader(b))
			dec.DisallowUnknownFields()
			if err := dec.Decode(&in); err != nil {
				return badInput("%s: not an estimate (see gridstage enter --help): %v", file, err)
			}
			e := pipeline.Entry{Pipeline: pipelineName, Stage: in.Code.Name, StageVersion: in.Code.Version,
				Model: in.Model, Params: in.Params, Scalars: in.Scalars, Vectors: in.Vectors}
			for i, c := range in.Chains {
				if c.Point == nil {
					return badInput("%s: chains[%d]: point is missing (the sweep point of the chain, 0 without a sweep)", file, i)
				}
				e.Chains = append(e.Chains, plugin.ChainRef{Path: c.Path, Point: *c.Point, ChainHash: c.ChainHash})
			}
			if e.Params == nil {
				e.Params = map[string]float64{}
			}
			w, err := pipeline.RecordExternal(context.Background(), ledger, e, &plugin.FileLoader{}, lineage.Now())
			if errors.Is(err, plugin.ErrBadRequest) {
				return badInput("%s: %v", file, err)
			}
			if err != nil {
				return &exitCodeError{code: exitFailure, err: err}
			}
			fmt.Fprintf(cmd.OutOrStdout(), "estimate %s by %s %s entered into %s (%s)\nfile %s\n",
				w.ID, w.Stage, w.StageVersion, ledger, plural.Count(len(w.ChainHashes), "chain", "chains"), filepath.ToSlash(w.Path))
			return nil
		},
	}
	cmd.Flags().StringVar(&pipelineName, "pipeline", "entered", "name recorded in the ledger's pipeline column")
	return cmd
}
