// Command caseweave turns an outbreak line list into a transmission report: it reads and
// validates the list, rebuilds the transmission trees, estimates the offspring distribution
// (R and the dispersion k) with bootstrap intervals, runs the branching-process mathematics
// and renders a self-contained HTML report.
//
// Exit codes: 0 ok, 1 input unusable, 2 usage error, 3 template error, 4 output error,
// 5 some mail not accepted.
package main

import (
	"errors"
	"fmt"
	"io"
	"os"
	"runtime/debug"

	"github.com/spf13/cobra"
)

// Exit codes, documented in the README and in --help.
const (
	exitOK       = 0
	exitInput    = 1
	exitUsage    = 2
	exitTemplate = 3
	exitOutput   = 4
	// exitMail (mail.go) is 5: some message was not accepted.
	// An interrupted write stops cleanly and exits as a shell reports a signal (128 + n).
	exitInterrupt  = 130 // SIGINT
	exitTerminated = 143 // SIGTERM
)

// exitError carries the exit code an error should end the program with.
type exitError struct {
	code int
	err  error
}

func (e *exitError) Error() string { return e.err.Error() }
func (e *exitError) Unwrap() error { return e.err }

func withCode(code int, err error) error {
	if err == nil {
		return nil
	}
	var ee *exitError
	if errors.As(err, &ee) {
		return err
	}
	return &exitError{code, err}
}

func usageErrorf(format string, a ...any) error {
	return &exitError{exitUsage, fmt.Errorf(format, a...)}
}

// env is what a command may touch of the outside world; tests pass their own.
type env struct {
	stdin            io.Reader // what the line-list path - reads; nil is the process's standard input
	stdout, stderr   io.Writer
	stderrIsTerminal bool
	// writeFault, in tests, fails or interrupts the n-th step of writing the outputs.
	writeFault func(step int) error
}

// defaultMemoryLimit is the soft heap limit when GOMEMLIMIT is not set: it makes the
// collector work harder on very large line lists instead of letting the heap double, so a
// 10,000,000-row file stays under 2 GB. Set GOMEMLIMIT to change it.
const defaultMemoryLimit = 1536 << 20

func main() {
	if os.Getenv("GOMEMLIMIT") == "" {
		debug.SetMemoryLimit(defaultMemoryLimit)
	}
	os.Exit(run(os.Args[1:], env{stdin: os.Stdin, stdout: os.Stdout, stderr: os.Stderr, stderrIsTerminal: isTerminal(os.Stderr)}))
}

// run executes one command line and returns the exit code. It never panics on bad input;
// a panic that escapes a bug is turned into a message and exit code 1 rather than a stack
// trace for the analyst.
func run(args []string, e env) (code int) {
	defer func() {
		if r := recover(); r != nil {
			fmt.Fprintf(e.stderr, "caseweave: internal error: %v\nPlease report this with the command you ran; no output was written.\n", r)
			code = exitInput
		}
	}()
	root := newRoot(e)
	root.SetArgs(args)
	err := root.Execute()
	if err == nil {
		return exitOK
	}
	fmt.Fprintf(e.stderr, "caseweave: %v\n", err)
	var ee *exitError
	if errors.As(err, &ee) {
		return ee.code
	}
	// Errors cobra raises itself (unknown command or flag, wrong argument count) are usage errors.
	return exitUsage
}

const exitCodesHelp = `Exit codes:
  0  ok
  1  input unusable (not a line list, a required column missing, no data rows, bad config)
  2  usage error (unknown flag or command, wrong arguments)
  3  template error (the message names the file, line and field)
  4  output error (a file could not be written; any earlier output is left untouched)
  5  mail: some message was not accepted by the server (the others were sent; run again to retry)
  130, 143  interrupted by SIGINT or SIGTERM while writing; nothing was changed
`

func newRoot(e env) *cobra.Command {
	root := &cobra.Command{
		Use:   "caseweave",
		Short: "From an outbreak line list to a transmission report",
		Long: `caseweave reads an outbreak line list (one row per case, with the identifier of the case
that infected it), rebuilds the transmission trees, estimates how many secondary cases each
case causes and how unevenly (R and the dispersion k, with bootstrap intervals), works out the
branching-process outlook, and writes a self-contained HTML report.`,
		SilenceUsage:  true,
		SilenceErrors: true,
	}
	root.SetOut(e.stdout)
	root.SetErr(e.stderr)
	root.SetUsageTemplate(root.UsageTemplate() + "\n" + exitCodesHelp)
	root.SetFlagErrorFunc(func(c *cobra.Command, err error) error {
		return &exitError{exitUsage, fmt.Errorf("%w (see '%s --help')", err, c.CommandPath())}
	})
	root.CompletionOptions.DisableDefaultCmd = true
	root.AddCommand(newCheckCmd(e), newEstimateCmd(e), newOutlookCmd(e), newReportCmd(e), newDemoCmd(e), newSimulateCmd(e), newTemplateCmd(e), newMailCmd(e), newBacktestCmd(e), newHistoryCmd(e))
	return root
}

// lineListArgs accepts one or more line-list files, with a usage exit code.
func lineListArgs(c *cobra.Command, args []string) error {
	if len(args) == 0 {
		return usageErrorf("%s needs one or more line-list files (- for standard input); see '%s --help'", c.CommandPath(), c.CommandPath())
	}
	return nil
}

// exactArgs is cobra.ExactArgs with a usage exit code and a plainer message.
func exactArgs(n int, what string) cobra.PositionalArgs {
	return func(c *cobra.Command, args []string) error {
		if len(args) != n {
			return usageErrorf("%s needs %s (got %d arguments); see '%s --help'", c.CommandPath(), what, len(args), c.CommandPath())
		}
		return nil
	}
}
