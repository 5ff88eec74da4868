package main

import (
	"errors"
	"fmt"

	"github.com/spf13/cobra"

	"gridstage/batch/merge"
	"gridstage/formats"
	"gridstage/internal/plural"
)

func init() { extraCommands = append(extraCommands, newMergeCmd) }

func newMergeCmd() *cobra.Command {
	var out string
	cmd := &cobra.Command{
		Use:   "merge SHARD_DIR... --out DIR",
		Short: "Combine the outputs of a sharded run into the output of the whole run",
		Long: `Combine the output folders of every shard of a run (gridstage run --shard I/N,
or the tasks of a Slurm array job) into one output folder. The merged files
hold the same rows in the same order as a single-machine run of the same
manifest, so their content hashes are equal.

Every shard must have finished (its folder holds shard.json) and each of
shards 1..N must be given exactly once; chain hashes are re-checked while
reading, so a damaged shard file stops the merge.`,
		Args: cobra.MinimumNArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			if out == "" {
				return badInput("--out is required: the folder to write the merged output to")
			}
			leanGC()
			res, err := merge.Merge(args, out)
			var ie *merge.InputError
			if errors.As(err, &ie) {
				return &usageError{msg: ie.Error()}
			}
			if err != nil {
				return err
			}
			w := cmd.OutOrStdout()
			fmt.Fprintf(w, "merged %s (%s) into %s\n", plural.Count(res.Shards, "shard", "shards"), plural.Count(res.Jobs, "job", "jobs"), out)
			for _, s := range res.Sets {
				for _, f := range s.Files {
					if f.Table == formats.TablePoints {
						fmt.Fprintf(w, "  %s  (%s)\n", f.Path, plural.Count(int(f.Rows), "point", "points"))
					}
				}
			}
			return nil
		},
	}
	cmd.Flags().StringVar(&out, "out", "", "folder for the merged output (created if needed)")
	return cmd
}
