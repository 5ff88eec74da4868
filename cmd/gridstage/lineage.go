package main

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"

	"github.com/spf13/cobra"

	"gridstage/pipeline/lineage"
	"gridstage/plugin"
)

func init() { extraCommands = append(extraCommands, newLineageCmd) }

func newLineageCmd() *cobra.Command {
	var (
		estimate, chain  string
		root             string
		noVerify, asJSON bool
	)
	cmd := &cobra.Command{
		Use:   "lineage LEDGER [--estimate ID | --chain HASH]",
		Short: "Ask the lineage ledger which chain fed an estimate, or which estimates used a chain",
		Long: `Query a lineage ledger written by "gridstage pipeline".

  --estimate ID   the chains that fed estimate ID
  --chain HASH    the estimates that used chain HASH
  (neither)       every estimate in the ledger

IDs and hashes may be abbreviated to any unique prefix of 6 or more hex
digits. Unless --no-verify is given, every chain file the answer names is
re-verified (its content hash, the chain's hash recomputed from the numbers,
its spec hash and numeric version against the ledger's) and every estimate
file is checked against its content-derived id; the command exits with
status 1 if any check fails.

The ledger names files relative to its own folder, so a folder copied or
moved whole verifies in place; --root resolves them beneath another folder
(a ledger kept apart from its outputs). A file missing from its recorded
place is looked for beneath the root by name and content hash.`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			if estimate != "" && chain != "" {
				return badInput("give --estimate or --chain, not both")
			}
			recs, err := lineage.Read(args[0])
			if errors.Is(err, os.ErrNotExist) {
				return badInput("%s: no such ledger", args[0])
			}
			if err != nil {
				return badInput("%v", err)
			}
			switch {
			case estimate != "":
				recs, err = lineage.ByEstimate(recs, estimate)
			case chain != "":
				recs, err = lineage.ByChain(recs, chain)
			}
			if err != nil {
				return badInput("%s: %v", args[0], err)
			}
			if root == "" {
				root = filepath.Dir(args[0])
			} else if fi, err := os.Stat(root); err != nil || !fi.IsDir() {
				return badInput("--root %s is not a folder", root)
			}
			var checks []check
			if !noVerify {
				checks = verifyRecords(cmd.Context(), recs, root)
			}
			if asJSON {
				enc := json.NewEncoder(cmd.OutOrStdout())
				enc.SetIndent("", "  ")
				if err := enc.Encode(struct {
					Records []lineage.Record `json:"records"`
					Checks  []check          `json:"checks,omitempty"`
				}{recs, checks}); err != nil {
					return err
				}
			} else {
				printLineage(cmd.OutOrStdout(), recs, checks, estimate != "", chain != "")
			}
			for _, c := range checks {
				if !c.OK {
					return &exitCodeError{code: exitFailure, err: fmt.Errorf("%s does not verify: %s", c.Path, c.Problem)}
				}
			}
			return nil
		},
	}
	fs := cmd.Flags()
	fs.StringVar(&estimate, "estimate", "", "estimate id (or a unique prefix): which chains fed it")
	fs.StringVar(&chain, "chain", "", "chain hash (or a unique prefix): which estimates used it")
	fs.BoolVar(&noVerify, "no-verify", false, "do not re-verify the files the answer names")
	fs.StringVar(&root, "root", "", "folder the ledger's relative paths start from (default: the ledger's folder)")
	fs.BoolVar(&asJSON, "json", false, "print one JSON object")
	cmd.SetContext(context.Background())
	return cmd
}

// check is the outcome of re-verifying one file named by the ledger.
type check struct {
	Kind    string `json:"kind"` // "chain" or "estimate"
	Path    string `json:"path"`
	Point   int    `json:"point,omitempty"`
	Hash    string `json:"hash"` // chain hash or estimate id
	OK      bool   `json:"ok"`
	Problem string `json:"problem,omitempty"`
}

// verifyRecords re-verifies each distinct chain and estimate file once,
// resolving the ledger's paths beneath root.
func verifyRecords(ctx context.Context, recs []lineage.Record, root string) []check {
	loader := &plugin.FileLoader{}
	var out []check
	seen := map[string]bool{}
	for _, r := range recs {
		key := fmt.Sprintf("chain %s %d %s", r.ChainPath, r.Point, r.ChainHash)
		if !seen[key] {
			seen[key] = true
			path := lineage.Resolve(root, r.ChainPath)
			c := check{Kind: "chain", Path: path, Point: r.Point, Hash: r.ChainHash, OK: true}
			ref := plugin.ChainRef{Path: path, Point: r.Point, ChainHash: r.ChainHash, FileHash: r.FileHash}
			if _, err := os.Stat(path); err != nil {
				if found := findChain(ctx, loader, root, r); found != "" {
					ref.Path, c.Path = found, found
				}
			}
			if full, err := loader.Complete(ctx, ref); err != nil {
				c.OK, c.Problem = false, err.Error()
			} else if full.SpecHash != r.SpecHash {
				c.OK, c.Problem = false, fmt.Sprintf("point %d has spec hash %s, the ledger says %s", r.Point, full.SpecHash, r.SpecHash)
			} else if r.Numeric != "" && full.Numeric != r.Numeric {
				c.OK, c.Problem = false, fmt.Sprintf("the file was solved under numeric version %s, the ledger says %s", full.Numeric, r.Numeric)
			}
			out = append(out, c)
		}
		if key := "estimate " + r.EstimateID; !seen[key] {
			seen[key] = true
			path := lineage.Resolve(root, r.EstimatePath)
			if _, err := os.Stat(path); err != nil {
				if found := findFile(root, r.EstimateID+".json"); found != "" {
					path = found
				}
			}
			c := check{Kind: "estimate", Path: path, Hash: r.EstimateID, OK: true}
			if err := verifyEstimateFile(path, r.EstimateID); err != nil {
				c.OK, c.Problem = false, err.Error()
			}
			out = append(out, c)
		}
	}
	return out
}

// findChain looks beneath root for the points file of a ledger row whose
// recorded path is gone: a file of the same name whose content hash is the
// row's. It returns "" when there is none.
func findChain(ctx context.Context, loader *plugin.FileLoader, root string, r lineage.Record) string {
	base := filepath.Base(filepath.FromSlash(r.ChainPath))
	found := ""
	filepath.WalkDir(root, func(p string, d fs.DirEntry, err error) error {
		if err != nil || found != "" || d.IsDir() || d.Name() != base {
			return nil
		}
		if _, err := loader.Complete(ctx, plugin.ChainRef{Path: p, Point: r.Point, ChainHash: r.ChainHash, FileHash: r.FileHash}); err == nil {
			found = p
		}
		return nil
	})
	return found
}

// findFile returns the first file named name beneath root, or "".
func findFile(root, name string) string {
	found := ""
	filepath.WalkDir(root, func(p string, d fs.DirEntry, err error) error {
		if err == nil && found == "" && !d.IsDir() && d.Name() == name {
			found = p
		}
		return nil
	})
	return found
}

// verifyEstimateFile recomputes an estimate's id from its file.
func verifyEstimateFile(path, id string) error {
	b, err := os.ReadFile(path)
	if err != nil {
		return err
	}
	var f struct {
		ID           string               `json:"id"`
		Stage        string               `json:"stage"`
		StageVersion string               `json:"stage_version"`
		Model        string               `json:"model"`
		Params       map[string]float64   `json:"params"`
		Chains       []plugin.ChainRef    `json:"chains"`
		Scalars      map[string]float64   `json:"scalars"`
		Vectors      map[string][]float64 `json:"vectors"`
	}
	if err := json.Unmarshal(b, &f); err != nil {
		return fmt.Errorf("not an estimate file: %v", err)
	}
	hashes := make([]string, len(f.Chains))
	for i, c := range f.Chains {
		hashes[i] = c.ChainHash
	}
	got := lineage.EstimateID(f.Stage, f.StageVersion, f.Model, f.Params, hashes, lineage.Values{Scalars: f.Scalars, Vectors: f.Vectors})
	if got != id {
		return fmt.Errorf("its contents hash to estimate id %s, the ledger says %s: the file changed after it was recorded", abbrev(got), abbrev(id))
	}
	return nil
}

func printLineage(w io.Writer, recs []lineage.Record, checks []check, byEstimate, byChain bool) {
	status := map[string]string{}
	for _, c := range checks {
		s := "verified"
		if !c.OK {
			s = "FAILED: " + c.Problem
		}
		status[c.Kind+" "+c.Hash] = s
	}
	note := func(kind, hash, path string) string {
		if s, ok := status[kind+" "+hash]; ok {
			return " [" + s + "]"
		}
		return ""
	}
	switch {
	case byEstimate:
		r := recs[0]
		fmt.Fprintf(w, "estimate %s\n  by %s %s, model %s, pipeline %s, recorded %s\n  file %s%s\n", r.EstimateID, r.Stage, r.StageVersion, r.Model,
			r.Pipeline, r.Time.Format("2006-01-02 15:04:05Z"), r.EstimatePath, note("estimate", r.EstimateID, r.EstimatePath))
		fmt.Fprintln(w, "fed by:")
		for _, r := range recs {
			fmt.Fprintf(w, "  chain %s\n    process %s point %d, spec %s, numeric version %s, manifest %s\n    file %s%s\n", r.ChainHash, r.Process, r.Point,
				r.SpecHash, orUnrecorded(r.Numeric), r.ManifestHash, r.ChainPath, note("chain", r.ChainHash, r.ChainPath))
		}
	case byChain:
		r := recs[0]
		fmt.Fprintf(w, "chain %s\n  process %s point %d, spec %s, numeric version %s, manifest %s\n  file %s%s\n", r.ChainHash, r.Process, r.Point,
			r.SpecHash, orUnrecorded(r.Numeric), r.ManifestHash, r.ChainPath, note("chain", r.ChainHash, r.ChainPath))
		fmt.Fprintln(w, "used by:")
		for _, r := range recs {
			fmt.Fprintf(w, "  estimate %s  %s %s / %s, recorded %s%s\n", abbrev(r.EstimateID), r.Stage, r.StageVersion, r.Model,
				r.Time.Format("2006-01-02 15:04:05Z"), note("estimate", r.EstimateID, r.EstimatePath))
		}
	default:
		fmt.Fprintf(w, "%d ledger rows\n", len(recs))
		for _, r := range recs {
			fmt.Fprintf(w, "  estimate %s  %-18s %-13s chain %s (%s point %d)  %s%s\n", abbrev(r.EstimateID), r.Stage, r.Model,
				abbrev(r.ChainHash), r.Process, r.Point, r.Time.Format("2006-01-02 15:04:05Z"), note("chain", r.ChainHash, r.ChainPath))
		}
	}
}

func orUnrecorded(v string) string {
	if v == "" {
		return "(not recorded)"
	}
	return v
}
