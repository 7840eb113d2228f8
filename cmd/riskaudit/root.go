package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"runtime/debug"
	"slices"
	"strings"
	"syscall"

	"github.com/spf13/cobra"

	"github.com/riskaudit/riskaudit/audit"
	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/internal/atomicfile"
	"github.com/riskaudit/riskaudit/model"
	"github.com/riskaudit/riskaudit/pgcohort"
	"github.com/riskaudit/riskaudit/plan"
)

// version is set at build time with -ldflags "-X main.version=…"; a
// build from a module version reports that version.
var version = "0.1.0-dev"

func toolVersion() string {
	if version != "0.1.0-dev" {
		return version
	}
	if bi, ok := debug.ReadBuildInfo(); ok && bi.Main.Version != "" && bi.Main.Version != "(devel)" {
		return bi.Main.Version
	}
	return version
}

// Exit statuses, documented in the root command's help (each command's
// help lists its own: withExitStatuses) and the README.
const (
	exitOK          = 0
	exitCriterion   = 1 // an audit ran and a criterion was not met
	exitUsage       = 2
	exitBadInput    = 3
	exitCannotFit   = 4
	exitOtherFailed = 5
	// An interrupted command exits with 128 + the signal's number: 130
	// for SIGINT (Ctrl-C), 143 for SIGTERM.
	exitSignalBase = 128
)

// interrupted is the cause of a command stopped by a signal.
type interrupted struct{ sig syscall.Signal }

func (e *interrupted) Error() string {
	return fmt.Sprintf("interrupted by %s: stopped, nothing was written", signalName(e.sig))
}

func signalName(s syscall.Signal) string {
	switch s {
	case syscall.SIGINT:
		return "SIGINT"
	case syscall.SIGTERM:
		return "SIGTERM"
	}
	return s.String()
}

// streams are the command's output streams, with whether each is a
// terminal: progress and decoration only go to a terminal.
type streams struct {
	out, err       io.Writer
	outTTY, errTTY bool
	// args are the command-line arguments, for provenance.
	args []string
}

func newStreams(out, err *os.File) *streams {
	return &streams{out: &checkedWriter{w: out}, err: err, outTTY: isTerminal(out), errTTY: isTerminal(err)}
}

// checkedWriter keeps the first error of the writes to it (stdout full
// or closed), so that a summary that could not be written fails the
// command.
type checkedWriter struct {
	w   io.Writer
	err error
}

func (c *checkedWriter) Write(p []byte) (int, error) {
	if c.err != nil {
		return 0, c.err
	}
	n, err := c.w.Write(p)
	c.err = err
	return n, err
}

func isTerminal(f *os.File) bool {
	st, err := f.Stat()
	return err == nil && st.Mode()&os.ModeCharDevice != 0
}

// usageError marks a mistake in the command line.
type usageError struct{ msg string }

func (e *usageError) Error() string { return e.msg }

func usagef(format string, args ...any) error { return &usageError{fmt.Sprintf(format, args...)} }

// rootLong is the root command's long help, ending with the table of
// every exit status.
func rootLong() string {
	return `riskaudit audits logistic-regression risk models for a yes/no clinical
outcome. 'audit' measures discrimination, calibration, accuracy and net
benefit of a frozen model (or of any column of predicted risks) on a new
cohort and writes a Markdown report with SVG figures and JSON; 'fit' fits a
model recipe on a development extract into a frozen model; 'score' appends
a frozen model's predicted risks to a cohort.

Start with 'riskaudit demo --out demo' to see every step on invented data.

` + exitTable(allExitStatuses()) + `

Each command's --help lists the statuses it can return.`
}

func newRootCmd(s *streams) *cobra.Command {
	root := &cobra.Command{
		Use:           "riskaudit",
		Short:         "Audit clinical risk models on development data and new cohorts",
		Long:          rootLong(),
		Version:       toolVersion(),
		SilenceErrors: true,
		SilenceUsage:  true,
	}
	root.SetOut(s.out)
	root.SetErr(s.err)
	root.SetVersionTemplate("riskaudit {{.Version}}\n")
	root.SetFlagErrorFunc(func(c *cobra.Command, err error) error {
		return &usageError{err.Error() + " (see '" + c.CommandPath() + " --help')"}
	})
	root.AddCommand(newAuditCmd(s), newFitCmd(s), newScoreCmd(s), newDemoCmd(s), newPlanCmd(s), newTrendCmd(s), newCompareCmd(s), newSampleSizeCmd(s), newHistoryCmd(s))
	return root
}

// run executes the command line and returns the exit status; ctx
// cancelled stops the command.
func run(ctx context.Context, args []string, s *streams) int {
	s.args = args
	root := newRootCmd(s)
	root.SetArgs(args)
	cmd, err := root.ExecuteContextC(ctx)
	if err != nil && ctx.Err() != nil && stopsOnSignal(cmd) {
		// The command stopped on the signal; the error is its echo.
		err = context.Cause(ctx)
	}
	if cw, ok := s.out.(*checkedWriter); ok && cw.err != nil && (err == nil || exitCode(err) == exitCriterion) {
		err = fmt.Errorf("writing to standard output: %w", unwrapPath(cw.err))
	}
	if err == nil {
		return exitOK
	}
	code := exitCode(err)
	msg := err.Error()
	if code == exitUsage && !strings.Contains(msg, "--help") {
		// Point to the help of the command that was run.
		path := "riskaudit"
		if cmd != nil {
			path = cmd.CommandPath()
		}
		msg += " (see '" + path + " --help')"
	}
	fmt.Fprintf(s.err, "riskaudit: %s\n", msg)
	return code
}

// exitCode maps an error to the exit status by its type.
func exitCode(err error) int {
	is := func(targets ...any) bool {
		for _, t := range targets {
			if errors.As(err, t) {
				return true
			}
		}
		return false
	}
	var in *interrupted
	msg := err.Error()
	switch {
	case errors.As(err, &in):
		return exitSignalBase + int(in.sig)
	case is(new(*criterionError)):
		return exitCriterion
	case is(new(*usageError), new(*audit.ConfigError), new(*atomicfile.TargetError)):
		return exitUsage
	case is(new(*plan.Error), new(*audit.HistoryError)):
		return exitBadInput
	case is(new(*model.SeparationError), new(*model.FitError)):
		return exitCannotFit
	case is(new(*cohort.Error), new(*model.SpecError), new(*pgcohort.Error)):
		return exitBadInput
	case strings.HasPrefix(msg, "unknown command"), strings.HasPrefix(msg, "unknown flag"),
		strings.Contains(msg, "required flag"), strings.HasPrefix(msg, "accepts "):
		return exitUsage
	}
	return exitOtherFailed
}

// unwrapPath is the system's error without the file name it names
// (/dev/stdout tells the user nothing).
func unwrapPath(err error) error {
	var pe *os.PathError
	if errors.As(err, &pe) {
		return pe.Err
	}
	return err
}

// exitStatus is one row of a command's exit-status table: the status
// (exitSignalBase stands for 130 and 143) and what it means for that
// command ("": the meaning in the root's table, exitMeaning).
type exitStatus struct {
	code    int
	meaning string
}

// exitMeaning is what status code means in the root's table (the
// README's "Exit status").
func exitMeaning(code int) string {
	switch code {
	case exitOK:
		return "success"
	case exitCriterion:
		return "an audit ran and a criterion was not met (verdict review or fail)"
	case exitUsage:
		return `wrong usage: an unknown flag, a missing argument, or a request the
     files on disk refuse and other flags resolve (an output on an input,
     a duplicate history record without --replace-record)`
	case exitBadInput:
		return "bad input: a data file or model spec that cannot be used as it is"
	case exitCannotFit:
		return "the model cannot be fitted: separation, collinear terms, no convergence"
	case exitOtherFailed:
		return "any other failure, such as an output file that cannot be written"
	case exitSignalBase:
		return "interrupted by SIGINT (Ctrl-C) or SIGTERM: stopped, nothing written"
	}
	return ""
}

// exitTable writes the exit-status table of rows, each with its own
// meaning or the root's.
func exitTable(rows []exitStatus) string {
	var b strings.Builder
	b.WriteString("Exit status:")
	for _, r := range rows {
		m := r.meaning
		if m == "" {
			m = exitMeaning(r.code)
		}
		code := fmt.Sprint(r.code)
		if r.code == exitSignalBase {
			code = "130, 143"
		}
		fmt.Fprintf(&b, "\n  %s  %s", code, m)
	}
	return b.String()
}

// allExitStatuses are every status riskaudit returns: the root's table.
func allExitStatuses() []exitStatus {
	return []exitStatus{{exitOK, ""}, {exitCriterion, ""}, {exitUsage, ""}, {exitBadInput, ""}, {exitCannotFit, ""}, {exitOtherFailed, ""}, {exitSignalBase, ""}}
}

// exitAnnotation is the annotation that lists a command's exit
// statuses, space-separated (exitSignalBase for 130 and 143).
const exitAnnotation = "riskaudit.exit-statuses"

// withExitStatuses ends c's long help with the table of the statuses
// c can return and records them on c (exitAnnotation), so that run
// reports a signal only for a command that stops on one.
func withExitStatuses(c *cobra.Command, rows ...exitStatus) *cobra.Command {
	if c.Long == "" {
		c.Long = c.Short
	}
	c.Long += "\n\n" + exitTable(rows)
	codes := make([]string, len(rows))
	for i, r := range rows {
		codes[i] = fmt.Sprint(r.code)
	}
	if c.Annotations == nil {
		c.Annotations = map[string]string{}
	}
	c.Annotations[exitAnnotation] = strings.Join(codes, " ")
	return c
}

// stopsOnSignal reports whether cmd stops when its context is cancelled
// by a signal (its table lists 130 and 143): only then is an error
// after a signal reported as the interruption.
func stopsOnSignal(cmd *cobra.Command) bool {
	return cmd != nil && slices.Contains(strings.Fields(cmd.Annotations[exitAnnotation]), fmt.Sprint(exitSignalBase))
}

// Meanings that several commands' tables share.
const (
	usageOutputs = `wrong usage: an unknown flag, a missing or contradictory option,
     or an output the files on disk refuse and other flags resolve (an
     output on an input, a symbolic link)`
	stdoutFailed = "any other failure, such as standard output that cannot be written"
	groupHelp    = "the help was shown"
	groupUsage   = "wrong usage: an unknown flag"
)
