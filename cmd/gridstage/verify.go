package main

import (
	"fmt"
	"path/filepath"

	"github.com/spf13/cobra"

	"gridstage/formats"
)

func init() { extraCommands = append(extraCommands, newVerifyCmd) }

func newVerifyCmd() *cobra.Command {
	return &cobra.Command{
		Use:   "verify PATH",
		Short: "Check the provenance and content hashes of an output file or folder",
		Long: `Check a gridstage output file, or every set in an output folder:

  - the gridstage metadata is complete and unchanged (metadata hash),
  - the content hash recomputed from the stored values matches,
  - transition probabilities lie in [0, 1] and every row sums to 1
    within 1e-12,
  - for a folder: the files of each set belong together (the points file
    records its siblings' content hashes) and every sweep point's chain
    hash recomputes.

Exit status 0 if everything checks, 1 naming the first mismatch (file,
point, row), 2 if PATH is not gridstage output.`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			rep, err := formats.Verify(args[0])
			if rep != nil {
				for _, w := range rep.Warnings {
					fmt.Fprintln(cmd.ErrOrStderr(), "gridstage: warning: "+w)
				}
			}
			if formats.IsNotOutput(err) {
				return badInput("%v", err)
			}
			if err != nil {
				return fmt.Errorf("verify failed: %w", err)
			}
			out := cmd.OutOrStdout()
			for _, f := range rep.Files {
				fmt.Fprintf(out, "ok  %-40s %9d rows  content %s\n", filepath.Base(f.Path), f.Rows, f.ContentHash[:16])
			}
			switch {
			case rep.Sets > 0:
				fmt.Fprintf(out, "%d file(s) in %d set(s) verified\n", len(rep.Files), rep.Sets)
			default:
				fmt.Fprintf(out, "%d file verified (on its own: verify the folder to check it against its set)\n", len(rep.Files))
			}
			return nil
		},
	}
}
