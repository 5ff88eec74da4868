package main

import (
	"github.com/spf13/cobra"

	"gridstage/manifests"
)

func init() { extraCommands = append(extraCommands, newSchemaCmd) }

func newSchemaCmd() *cobra.Command {
	return &cobra.Command{
		Use:   "schema",
		Short: "Print the JSON Schema of run manifests, for editors and other tools",
		Long: `Print the JSON Schema (draft 2020-12) that run manifests follow.

Point an editor's YAML or JSON language server at the printed file to get
completion and checking while writing a manifest, for example:

  gridstage schema > gridstage-manifest.schema.json

and, at the top of a manifest:

  # yaml-language-server: $schema=gridstage-manifest.schema.json

The schema catches wrong keys, types and ranges; gridstage run checks more
(rules between fields, sweep values, draw tables) and names the file, line,
column and field of every problem.`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			_, err := cmd.OutOrStdout().Write(manifests.Schema())
			return err
		},
	}
}
