package main

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"os/signal"
	"path/filepath"
	"sort"
	"strings"
	"syscall"
	"time"

	"github.com/spf13/cobra"

	"gridstage/internal/plural"
	"gridstage/pipeline"
	"gridstage/plugin"
)

func init() { extraCommands = append(extraCommands, newPipelineCmd) }

func newPipelineCmd() *cobra.Command {
	var (
		timeout, startTimeout time.Duration
		verbose, asJSON       bool
		root                  string
	)
	cmd := &cobra.Command{
		Use:   "pipeline PIPELINE.yaml",
		Short: "Run a pipeline: discretize a manifest, hand the chains to solver stages, record lineage",
		Long: `Run a pipeline file: gridstage (as a stage) discretizes the run manifest
the file names, each downstream stage solves its models on the chains, every
estimate is written to <out>/estimates/<id>.json and the lineage ledger
records which chain fed which estimate. Stages are any executables speaking
the stage protocol; each call to a stage is limited by the timeout.

The manifest and stage commands named in the file are relative to its
folder; its out and ledger lie beneath the output root (--output-root, else
$GRIDSTAGE_OUTPUT_ROOT, else the current folder).`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			spec, err := pipeline.Load(args[0], outputRoot(root))
			if err != nil {
				return badInput("%v", err)
			}
			self, err := os.Executable()
			if err != nil {
				return err
			}
			opt := pipeline.Options{
				GridCommand: []string{self, "serve"}, Loader: &plugin.FileLoader{},
				Timeout: timeout, StartTimeout: startTimeout,
			}
			if verbose {
				opt.Stderr = cmd.ErrOrStderr()
			}
			ctx, stop := signal.NotifyContext(cmd.Context(), os.Interrupt, syscall.SIGTERM)
			defer stop()
			res, err := pipeline.Run(ctx, spec, opt)
			if err != nil {
				if errors.Is(err, plugin.ErrBadRequest) {
					return badInput("%v", err)
				}
				return err
			}
			if asJSON {
				enc := json.NewEncoder(cmd.OutOrStdout())
				enc.SetIndent("", "  ")
				return enc.Encode(res)
			}
			printPipeline(cmd.OutOrStdout(), spec, res)
			return nil
		},
	}
	fs := cmd.Flags()
	fs.DurationVar(&timeout, "timeout", 0, "limit for each call to a stage (default: the pipeline file's, else 10m)")
	fs.DurationVar(&startTimeout, "start-timeout", 0, "limit for a stage's handshake (default: the pipeline file's, else 30s)")
	fs.BoolVar(&verbose, "verbose", false, "copy every stage's stderr to stderr")
	fs.BoolVar(&asJSON, "json", false, "print the chains and estimates as one JSON object")
	outputRootFlag(cmd, &root)
	cmd.SetContext(context.Background())
	return cmd
}

func printPipeline(w io.Writer, s *pipeline.Spec, res *pipeline.Result) {
	fmt.Fprintf(w, "pipeline %s: %s, %s\n", s.Name, plural.Count(len(res.Chains), "chain", "chains"), plural.Count(len(res.Estimates), "estimate", "estimates"))
	fmt.Fprintln(w, "chains:")
	for _, c := range res.Chains {
		fmt.Fprintf(w, "  %-16s point %-3d chain %s  spec %s\n", c.Process, c.Point, abbrev(c.ChainHash), abbrev(c.SpecHash))
	}
	fmt.Fprintln(w, "estimates:")
	for _, e := range res.Estimates {
		fmt.Fprintf(w, "  %s  %s %s / %s on chain %s: %s\n", abbrev(e.ID), e.Stage, e.StageVersion, e.Model,
			abbrev(strings.Join(e.ChainHashes, ",")), scalars(e.Scalars))
	}
	fmt.Fprintf(w, "estimates written to %s; lineage appended to %s\n", shown(filepath.Join(s.Out, "estimates")), shown(res.Ledger))
}

// shown gives a path relative to the working folder when it lies beneath
// it, so that what a run prints does not depend on where the checkout is.
func shown(path string) string {
	wd, err := os.Getwd()
	if err != nil {
		return path
	}
	if rel, err := filepath.Rel(wd, path); err == nil && !strings.HasPrefix(rel, "..") {
		return filepath.ToSlash(rel)
	}
	return path
}

// abbrev shortens a hash for display; queries accept any unique prefix.
func abbrev(h string) string {
	if len(h) > 12 {
		return h[:12]
	}
	return h
}

func scalars(m map[string]float64) string {
	keys := make([]string, 0, len(m))
	for k := range m {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	parts := make([]string, len(keys))
	for i, k := range keys {
		parts[i] = fmt.Sprintf("%s=%.6g", k, m[k])
	}
	return strings.Join(parts, " ")
}
