package main

import (
	"errors"

	"github.com/spf13/cobra"

	"gridstage/plugin"
	"gridstage/plugin/chainstage"
)

func init() { extraCommands = append(extraCommands, newServeCmd) }

func newServeCmd() *cobra.Command {
	return &cobra.Command{
		Use:   "serve",
		Short: "Run as a pipeline stage that discretizes manifests (launched by a host, not by people)",
		Long: `Run gridstage as a stage of the stage protocol (go-plugin over gRPC,
protocol version 1). A pipeline host such as "gridstage pipeline" launches it
and asks it to discretize a run manifest or a job spec; it writes the chains
and answers with references to them. Run by hand it exits with status 2.`,
		Args: cobra.NoArgs,
		RunE: func(*cobra.Command, []string) error {
			err := plugin.Serve(&chainstage.Stage{})
			if errors.Is(err, plugin.ErrNotLaunched) {
				return badInput("%v", err)
			}
			return err
		},
	}
}
