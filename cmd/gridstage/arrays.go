package main

import (
	"errors"
	"fmt"
	"path/filepath"

	"github.com/spf13/cobra"

	"gridstage/formats"
	"gridstage/formats/arrays"
	"gridstage/internal/plural"
)

func init() { extraCommands = append(extraCommands, newArraysCmd) }

func newArraysCmd() *cobra.Command {
	var out, process string
	var kinds []string
	cmd := &cobra.Command{
		Use:   "arrays PATH [--to npz,mat,csv] [--out DIR] [--process P]",
		Short: "Write the chains of an output folder as plain arrays for NumPy, MATLAB/Octave and CSV readers",
		Long: `Verify an output folder, then write each process's chains as plain arrays,
readable without any Parquet library:

  point-<i>.npz   one NumPy archive per sweep point (numpy.load)
  point-<i>.mat   one MAT-file (level 5) per sweep point (scipy.io.loadmat,
                  MATLAB, Octave)
  *.csv           wide tables for the whole sweep: points, states,
                  transition (one row per from-state, one column per
                  to-state), moments, and the baseline's states and
                  transition
  provenance.json spec and chain hash of every point, the content hashes of
                  the files they came from, and a SHA-256 of every file

Each point file holds grid, transition, stationary (or initial),
matched, the conditional moments, the baseline chain beside it, the swept
parameter values and the hashes (docs/FORMATS.md, "Arrays for other
languages"). The files go to DIR/<process>/ (default DIR: PATH/arrays),
which is replaced whole.

Exit status 0 on success, 1 if PATH fails verification, 2 if PATH is not
gridstage output or an option does not fit it.`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			src := args[0]
			if out == "" {
				out = filepath.Join(src, "arrays")
			}
			written, err := arrays.Export(src, out, arrays.Options{Kinds: kinds, Process: process})
			var ue *arrays.UsageError
			if formats.IsNotOutput(err) || errors.As(err, &ue) {
				return badInput("%v", err)
			}
			if err != nil {
				return fmt.Errorf("arrays: %w", err)
			}
			w := cmd.OutOrStdout()
			for _, x := range written {
				fmt.Fprintf(w, "%s: %s, %s in %s\n", x.Process, plural.Count(x.Points, "point", "points"), plural.Count(x.Files, "file", "files"), x.Dir)
			}
			return nil
		},
	}
	cmd.Flags().StringSliceVar(&kinds, "to", nil, "kinds to write, comma-separated: npz, mat, csv (default all)")
	cmd.Flags().StringVar(&out, "out", "", "folder to write into, one subfolder per process (default PATH/arrays)")
	cmd.Flags().StringVar(&process, "process", "", "export only this process")
	return cmd
}
