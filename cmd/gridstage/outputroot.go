package main

import (
	"os"

	"github.com/spf13/cobra"
)

// outputRootEnv names the environment variable that sets the output root
// when --output-root is not given.
const outputRootEnv = "GRIDSTAGE_OUTPUT_ROOT"

// outputRootFlag registers --output-root on cmd: the folder beneath which
// the relative output locations named in a manifest (output.folder) or a
// pipeline file (out, ledger) lie. Inputs named in those files stay
// relative to the file; outputs never go beside it, among sources
// (README, "Where output goes").
func outputRootFlag(cmd *cobra.Command, root *string) {
	cmd.Flags().StringVar(root, "output-root", "", "folder that relative output folders in the file lie beneath (default: $"+outputRootEnv+", else the current folder)")
}

// outputRoot returns the output root: the flag, else the environment
// variable, else "" (the current folder).
func outputRoot(flag string) string {
	if flag != "" {
		return flag
	}
	return os.Getenv(outputRootEnv)
}
