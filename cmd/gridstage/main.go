// Command gridstage discretizes shock processes into Markov chains for
// dynamic structural models and writes them as Arrow/Parquet tensors with
// provenance hashes.
package main

import (
	"errors"
	"fmt"
	"io"
	"log/slog"
	"os"

	"github.com/spf13/cobra"

	"gridstage/internal/logging"
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
	code := exitFailure
	var ue *usageError
	var ec *exitCodeError
	switch {
	case errors.As(err, &ue) || isCobraUsage(err):
		code = exitUsage
	case errors.As(err, &ec):
		code = ec.code
	}
	if jsonLogRequested(args) {
		log, _ := logging.New(stderr, "json", slog.LevelInfo)
		log.Error(err.Error(), "exit_status", code)
		return code
	}
	fmt.Fprintln(stderr, "gridstage: "+err.Error())
	return code
}

// jsonLogRequested reports whether the command line asks for JSON logs
// (--log-format json), so that even an error found before the command
// reads its flags reaches stderr as a JSON line.
func jsonLogRequested(args []string) bool {
	for i, a := range args {
		switch {
		case a == "--":
			return false
		case a == "--log-format=json":
			return true
		case a == "--log-format" && i+1 < len(args) && args[i+1] == "json":
			return true
		}
	}
	return false
}

// exitCodeError carries an explicit exit status.
type exitCodeError struct {
	code int
	err  error
}

func (e *exitCodeError) Error() string { return e.err.Error() }
func (e *exitCodeError) Unwrap() error { return e.err }
