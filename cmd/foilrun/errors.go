package main

import (
	"errors"
	"fmt"
	"io"
	"strings"

	"github.com/foilrun/foilrun/kinetics"
	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/recipe/infile"
	"github.com/foilrun/foilrun/store"
)

// Exit statuses.
const (
	exitOK       = 0
	exitFindings = 1 // checks found errors
	exitUsage    = 2 // bad flags, unreadable or invalid input, or the command could not do its job
)

// exitKind says what went wrong; exitStatus turns it into the exit status.
type exitKind int

const (
	kindFailure  exitKind = iota // the command could not do its job (a file it cannot write, the database down)
	kindUsage                    // how the command was called: flags, arguments, their combinations
	kindInput                    // the user's data: a file's content, a value given on the command line
	kindFindings                 // checks found errors; the findings are printed already
)

// cliError is the one error type the commands return for what the user
// must fix: its kind picks the exit status and hint is the second line
// printed under the message ("" for none).
type cliError struct {
	kind exitKind
	err  error
	hint string
}

func (e *cliError) Error() string { return e.err.Error() }
func (e *cliError) Unwrap() error { return e.err }

// Hint is the line telling the user what to do, or "".
func (e *cliError) Hint() string { return e.hint }

func (e *cliError) exitKind() exitKind { return e.kind }

// errFindings is returned by a command whose checks found errors; the
// findings have been printed already.
var errFindings error = &cliError{kind: kindFindings, err: errors.New("checks found errors")}

// usagef is an error in how the command was called.
func usagef(format string, args ...any) error {
	return &cliError{kind: kindUsage, err: fmt.Errorf(format, args...)}
}

// asUsage marks err, keeping its message, as an error in how the command
// was called (a flag value a library refused, say).
func asUsage(err error) error { return &cliError{kind: kindUsage, err: err} }

// inputError marks err, keeping its message, as an error in the user's
// data.
func inputError(err error) error { return &cliError{kind: kindInput, err: err} }

// withHint adds a hint line to err and keeps its kind.
func withHint(err error, hint string) error {
	return &cliError{kind: kindOf(err), err: err, hint: hint}
}

// inputSentinels are the library errors that mean "the user's data is
// wrong": anything wrapping one of them is an input error.
var inputSentinels = []error{
	recipe.ErrInvalid, store.ErrInvalid, infile.ErrNotRegular, infile.ErrTooLarge,
	kinetics.ErrAxis, kinetics.ErrSuggest, kinetics.ErrFitInput, kinetics.ErrNoCovariance, kinetics.ErrMetric, kinetics.ErrParams,
}

// kindOf classifies err: the outermost error that knows its kind wins,
// then the library sentinels of bad input; anything else is a failure.
func kindOf(err error) exitKind {
	var k interface{ exitKind() exitKind }
	if errors.As(err, &k) {
		return k.exitKind()
	}
	for _, s := range inputSentinels {
		if errors.Is(err, s) {
			return kindInput
		}
	}
	return kindFailure
}

// exitStatus is the exit status for err: 0 for none, 1 when checks found
// errors, 2 for everything else (usage, input, and failures: the command
// could not do its job, so a script must not read its output as a result).
func exitStatus(err error) int {
	if err == nil {
		return exitOK
	}
	if kindOf(err) == kindFindings {
		return exitFindings
	}
	return exitUsage
}

// hintOf returns the first non-empty hint in err's chain: any error with a
// method Hint() string supplies one (cliError, and the libraries' typed
// input errors).
func hintOf(err error) string {
	if err == nil {
		return ""
	}
	if h, ok := err.(interface{ Hint() string }); ok && h.Hint() != "" {
		return h.Hint()
	}
	switch u := err.(type) {
	case interface{ Unwrap() error }:
		return hintOf(u.Unwrap())
	case interface{ Unwrap() []error }:
		for _, e := range u.Unwrap() {
			if h := hintOf(e); h != "" {
				return h
			}
		}
	}
	return ""
}

// exitCode prints err (message, then its hint on a second line) and
// returns the exit status. Findings have been printed by the command.
func exitCode(err error, w io.Writer) int {
	status := exitStatus(err)
	if status == exitOK || status == exitFindings {
		return status
	}
	fmt.Fprintln(w, "foilrun: "+strings.ReplaceAll(err.Error(), "\n", "\n  "))
	if h := hintOf(err); h != "" {
		fmt.Fprintln(w, "  hint: "+h)
	}
	return status
}
