package main

import (
	"errors"
	"fmt"
	"io"
	"os"
	"strings"

	"github.com/spf13/cobra"
	"golang.org/x/term"

	"github.com/foilrun/foilrun/store"
)

// Exit statuses.
const (
	exitOK       = 0
	exitFindings = 1 // checks found errors
	exitUsage    = 2 // bad flags, unreadable or invalid input
)

// streams are the command's input and outputs, injected so tests can
// capture them.
type streams struct {
	In     io.Reader
	Out    io.Writer // results
	Err    io.Writer // status, progress, errors
	OutTTY bool      // stdout is a terminal: human tables may align
	ErrTTY bool      // stderr is a terminal: progress bars may draw
}

func newStreams() *streams {
	return &streams{
		In: os.Stdin, Out: os.Stdout, Err: os.Stderr,
		OutTTY: term.IsTerminal(int(os.Stdout.Fd())),
		ErrTTY: term.IsTerminal(int(os.Stderr.Fd())),
	}
}

// factory holds what commands need, made lazily so that commands which do
// not need the database never open it.
type factory struct {
	io *streams
	// dbFlag is the --db value; the store is opened on first use.
	dbFlag string
	// closers run after the command.
	closers []func() error
	// log is the run log, once opened by runLog.
	log store.RunLog
}

// errFindings is returned by a command whose checks found errors; the
// findings have been printed already.
var errFindings = errors.New("checks found errors")

// usageError marks an error in how the command was called.
type usageError struct{ err error }

func (e usageError) Error() string { return e.err.Error() }
func (e usageError) Unwrap() error { return e.err }

func usagef(format string, args ...any) error { return usageError{fmt.Errorf(format, args...)} }

// hintError carries a second line telling the user what to do.
type hintError struct {
	err  error
	hint string
}

func (e hintError) Error() string { return e.err.Error() }
func (e hintError) Unwrap() error { return e.err }

func withHint(err error, hint string) error { return hintError{err, hint} }

func newRootCmd(f *factory) *cobra.Command {
	root := &cobra.Command{
		Use:   "foilrun",
		Short: "Plan, check, predict and log graphene CVD growth on copper foil",
		Long: `foilrun plans graphene growth recipes for tube-furnace CVD on copper foil, checks
them against the furnace's limits, predicts coverage and domain size, flags
hydrogen and methane hazards, logs every run and learns from the log.`,
		SilenceUsage:  true,
		SilenceErrors: true,
	}
	root.PersistentFlags().StringVar(&f.dbFlag, "db", "", "run-log database (file path or postgres:// URL; default $FOILRUN_DB or the user data folder)")
	root.SetOut(f.io.Out)
	root.SetErr(f.io.Err)
	root.SetIn(f.io.In)
	root.AddCommand(
		newCheckCmd(f),
		newNewCmd(f),
		newVersionCmd(f),
		newMeasureCmd(f),
		newDemoCmd(f),
		newSafetyCmd(f),
		newChecklistCmd(f),
		newPredictCmd(f),
		newWindowCmd(f),
		newFitCmd(f),
		newSuggestCmd(f),
		newRunCmd(f),
		newRunsCmd(f),
		newOutcomeCmd(f),
		newDBCmd(f),
	)
	return root
}

// run executes the command line and maps the outcome to an exit status.
func run(args []string, io *streams) int {
	f := &factory{io: io}
	root := newRootCmd(f)
	root.SetArgs(args)
	err := root.Execute()
	for i := len(f.closers) - 1; i >= 0; i-- {
		if cerr := f.closers[i](); cerr != nil && err == nil {
			err = cerr
		}
	}
	return exitCode(err, io.Err)
}

// exitCode prints err (message and hint) and returns the exit status.
func exitCode(err error, w io.Writer) int {
	if err == nil {
		return exitOK
	}
	if errors.Is(err, errFindings) {
		return exitFindings
	}
	msg := err.Error()
	fmt.Fprintln(w, "foilrun: "+strings.ReplaceAll(msg, "\n", "\n  "))
	var h hintError
	if errors.As(err, &h) && h.hint != "" {
		fmt.Fprintln(w, "  hint: "+h.hint)
	}
	// Everything else is a usage error, unreadable or invalid input, or a
	// failure to reach the run log: the command could not do its job.
	return exitUsage
}
