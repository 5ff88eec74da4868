// Command gridstage discretizes shock processes into Markov chains for
// dynamic structural models and writes them as Arrow/Parquet tensors with
// provenance hashes.
package main

import (
	"errors"
	"fmt"
	"io"
	"os"

	"github.com/spf13/cobra"

	"gridstage/internal/version"
)

// Exit codes (contract): 0 ok, 1 job failure, 2 bad input or usage.
const (
	exitOK      = 0
	exitFailure = 1
	exitUsage   = 2
)

// usageError marks bad input or usage: the command exits with status 2.
type usageError struct{ msg string }

func (e *usageError) Error() string { return e.msg }

// badInput returns a usageError with a formatted message.
func badInput(format string, args ...any) error {
	return &usageError{msg: fmt.Sprintf(format, args...)}
}

func newRoot() *cobra.Command {
	root := &cobra.Command{
		Use:           "gridstage",
		Short:         "Discretize shock processes into Markov chains with exact conditional moments",
		Version:       version.Tool,
		SilenceUsage:  true,
		SilenceErrors: true,
	}
	root.SetFlagErrorFunc(func(_ *cobra.Command, err error) error {
		return flagHint(err)
	})
	root.AddCommand(newDiscretizeCmd())
	for _, add := range extraCommands {
		root.AddCommand(add())
	}
	return root
}

// extraCommands lets each subcommand file register itself in init, so that
// adding a command touches only its own file.
var extraCommands []func() *cobra.Command

func main() {
	os.Exit(execute(os.Args[1:], os.Stdout, os.Stderr))
}

// execute runs the command line and returns the exit status; tests call it
// in-process with their own writers.
func execute(args []string, stdout, stderr io.Writer) int {
	root := newRoot()
	root.SetArgs(args)
	root.SetOut(stdout)
	root.SetErr(stderr)
	err := root.Execute()
	if err == nil {
		return exitOK
	}
	fmt.Fprintln(stderr, "gridstage: "+err.Error())
	var ue *usageError
	if errors.As(err, &ue) || isCobraUsage(err) {
		return exitUsage
	}
	var ec *exitCodeError
	if errors.As(err, &ec) {
		return ec.code
	}
	return exitFailure
}

// exitCodeError carries an explicit exit status.
type exitCodeError struct {
	code int
	err  error
}

func (e *exitCodeError) Error() string { return e.err.Error() }
func (e *exitCodeError) Unwrap() error { return e.err }
