package main

import (
	"fmt"
	"path/filepath"

	"github.com/spf13/cobra"

	"gridstage/batch"
	"gridstage/formats"
	"gridstage/internal/plural"
)

func init() { extraCommands = append(extraCommands, newVerifyCmd) }

func newVerifyCmd() *cobra.Command {
	var valuesOnly bool
	cmd := &cobra.Command{
		Use:   "verify PATH",
		Short: "Check the provenance and content hashes of an output file or folder",
		Long: `Check a gridstage output file, or every set in an output folder:

  - the gridstage metadata is complete and unchanged (metadata hash),
  - the content hash recomputed from the stored values matches,
  - transition probabilities lie in [0, 1] and every row sums to 1
    within 1e-12,
  - for a folder: the files of each set belong together (the points file
    records its siblings' content hashes) and every sweep point's chain
    hash recomputes;
  - against run.json (required in a folder; used for a single file when it
    lists the file): the record's own hash, that the folder holds exactly
    the files it lists, all of this run (one manifest hash), that every
    successful job's hashes and swept values are its point's in the files,
    and that each file's content hash and SHA-256 of its bytes are those
    recorded. A file whose bytes changed while its values did not is a
    finding of its own; --values-only skips the byte digests, for files
    re-encoded on purpose by another writer.

Exit status 0 if everything checks; 1 naming the first mismatch (file,
point, row), including a file named as gridstage output that another
writer rewrote; 2 if PATH does not exist or is not gridstage output at all
(a file named otherwise, a folder holding no gridstage files).`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			rep, err := batch.Verify(args[0], batch.VerifyOptions{ValuesOnly: valuesOnly})
			if rep != nil && rep.Report != nil {
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
			bytesNote := fmt.Sprintf("; bytes of %d checked against %s", rep.BytesChecked, batch.RecordFile)
			if valuesOnly {
				bytesNote = "; bytes not checked (--values-only)"
			} else if rep.Record == nil {
				bytesNote = "; no " + batch.RecordFile + " lists it, so its bytes were not checked"
			}
			switch {
			case rep.Sets > 0:
				fmt.Fprintf(out, "%s in %s verified against %s%s\n", plural.Count(len(rep.Files), "file", "files"), plural.Count(rep.Sets, "set", "sets"), batch.RecordFile, bytesNote)
			default:
				fmt.Fprintf(out, "%d file verified (on its own: verify the folder to check it against its set)%s\n", len(rep.Files), bytesNote)
			}
			return nil
		},
	}
	cmd.Flags().BoolVar(&valuesOnly, "values-only", false, "check values, hashes and the run record but not the files' byte digests (for files re-encoded on purpose)")
	return cmd
}
