package main

import (
	"errors"
	"io"
	"os"
	"time"

	"github.com/spf13/cobra"
	"golang.org/x/term"

	"github.com/foilrun/foilrun/store"
)

// streams are the command's input and outputs, injected so tests can
// capture them.
type streams struct {
	In     io.Reader
	Out    io.Writer // results
	Err    io.Writer // status, progress, errors
	OutTTY bool      // stdout is a terminal: tables align; else they are tab-separated
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
// not need the database never open it. Every command's options hold it.
type factory struct {
	io *streams
	// now is the clock: the time outcomes are measured and runs logged.
	now func() time.Time
	// dbFlag is the --db value; the store is opened on first use.
	dbFlag string
	// closers run after the command.
	closers []func() error
	// log is the run log, once opened by runLog.
	log store.RunLog
}

func newRootCmd(f *factory) *cobra.Command {
	root := &cobra.Command{
		Use:   "foilrun",
		Short: "Plan, check, predict and log graphene CVD growth on copper foil",
		Long: `foilrun plans graphene growth recipes for tube-furnace CVD on copper foil, checks
them against the furnace's limits, predicts coverage and domain size, flags
hydrogen and methane hazards, logs every run and learns from the log.

Files: foilrun reads regular files only (not pipes, devices or folders), each
kind up to a size: recipe, furnace, site and params files 1 MiB; furnace logs,
micrographs and imports 1 GiB (micrographs also 256 Mpixel). It writes every
output (-o, --plot, --overlay, db backup) to a temporary file that replaces
the target only once complete, never through a symbolic link, over one of the
command's inputs or the run log, nor over an existing file without --force.`,
		SilenceUsage:  true,
		SilenceErrors: true,
	}
	root.SetFlagErrorFunc(flagError)
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
		newDesignCmd(f),
		newRunCmd(f),
		newRunsCmd(f),
		newOutcomeCmd(f),
		newDBCmd(f),
		newServeCmd(f),
	)
	markArgErrors(root)
	return root
}

// flagError reports a flag the command line got wrong as a usage error;
// a value refused by its type is shown in that type's words.
func flagError(_ *cobra.Command, err error) error {
	var fv *flagValueError
	if errors.As(err, &fv) {
		return asUsage(fv)
	}
	return asUsage(err)
}

// markArgErrors makes the argument checks of cmd and its subcommands
// return usage errors.
func markArgErrors(cmd *cobra.Command) {
	if check := cmd.Args; check != nil {
		cmd.Args = func(c *cobra.Command, args []string) error {
			if err := check(c, args); err != nil {
				return asUsage(err)
			}
			return nil
		}
	}
	for _, c := range cmd.Commands() {
		markArgErrors(c)
	}
}

// run executes the command line and maps the outcome to an exit status.
func run(args []string, io *streams) int {
	s := *io
	s.Out = &outWriter{Writer: io.Out, tty: io.OutTTY}
	f := &factory{io: &s, now: time.Now}
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
