package main

import (
	"bytes"
	"errors"
	"fmt"
	"testing"

	"github.com/foilrun/foilrun/kinetics"
	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/store"
)

// hinted stands for a library's typed input error that carries its own
// hint (the kinetics input errors do): anything with Hint() string.
type hinted struct{ msg, hint string }

func (e hinted) Error() string { return e.msg }
func (e hinted) Hint() string  { return e.hint }

func TestExitStatus(t *testing.T) {
	t.Parallel()
	plain := errors.New("disk full")
	tests := []struct {
		name   string
		err    error
		kind   exitKind
		status int
	}{
		{"findings", errFindings, kindFindings, exitFindings},
		{"wrapped findings", fmt.Errorf("check: %w", errFindings), kindFindings, exitFindings},
		{"usage", usagef("--bins %d: want 1 to 100", 0), kindUsage, exitUsage},
		{"library error as usage", asUsage(plain), kindUsage, exitUsage},
		{"input", inputError(plain), kindInput, exitUsage},
		{"recipe.ErrInvalid", fmt.Errorf("load: %w", recipe.ErrInvalid), kindInput, exitUsage},
		{"recipe.LoadError", &recipe.LoadError{What: "recipe", File: "a.yaml"}, kindInput, exitUsage},
		{"store.ErrInvalid", fmt.Errorf("outcome: %w", store.ErrInvalid), kindInput, exitUsage},
		{"kinetics.ErrAxis", fmt.Errorf("axis: %w", kinetics.ErrAxis), kindInput, exitUsage},
		{"kinetics.ErrSuggest", fmt.Errorf("target: %w", kinetics.ErrSuggest), kindInput, exitUsage},
		{"kinetics.ErrFitInput", fmt.Errorf("fit: %w", kinetics.ErrFitInput), kindInput, exitUsage},
		{"hint keeps the kind", withHint(fmt.Errorf("x: %w", recipe.ErrInvalid), "do y"), kindInput, exitUsage},
		{"hint on a usage error", withHint(usagef("no such template"), "see --list"), kindUsage, exitUsage},
		{"failure", plain, kindFailure, exitUsage},
		{"hint on a failure", withHint(plain, "free some space"), kindFailure, exitUsage},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			if got := kindOf(tt.err); got != tt.kind {
				t.Errorf("kindOf: got %d, want %d", got, tt.kind)
			}
			if got := exitStatus(tt.err); got != tt.status {
				t.Errorf("exitStatus: got %d, want %d", got, tt.status)
			}
		})
	}
	if got := exitStatus(nil); got != exitOK {
		t.Errorf("exitStatus(nil): got %d, want 0", got)
	}
}

func TestHintOf(t *testing.T) {
	t.Parallel()
	lib := hinted{"target \"size>=4um\": unknown quantity", "write domain_size"}
	tests := []struct {
		name string
		err  error
		want string
	}{
		{"none", errors.New("x"), ""},
		{"own", withHint(errors.New("x"), "do y"), "do y"},
		{"library error", lib, "write domain_size"},
		{"library error wrapped", fmt.Errorf("suggest: %w", lib), "write domain_size"},
		{"library error as usage", asUsage(lib), "write domain_size"},
		{"library error joined", errors.Join(errors.New("a"), lib), "write domain_size"},
		{"outer hint wins", withHint(lib, "outer"), "outer"},
		{"empty library hint", hinted{"x", ""}, ""},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			if got := hintOf(tt.err); got != tt.want {
				t.Errorf("got %q, want %q", got, tt.want)
			}
		})
	}
}

// exitCode prints the message (continuation lines indented) and the hint
// line; findings were printed by the command and print nothing more.
func TestExitCodePrints(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name   string
		err    error
		status int
		want   string
	}{
		{"ok", nil, 0, ""},
		{"findings", errFindings, 1, ""},
		{"message and hint", withHint(usagef("%s already exists", "a.yaml"), "pass --force to overwrite it"), 2,
			"foilrun: a.yaml already exists\n  hint: pass --force to overwrite it\n"},
		{"two lines", inputError(errors.New("first\nsecond")), 2, "foilrun: first\n  second\n"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			var b bytes.Buffer
			if got := exitCode(tt.err, &b); got != tt.status || b.String() != tt.want {
				t.Errorf("got %d %q, want %d %q", got, b.String(), tt.status, tt.want)
			}
		})
	}
}

// Flag and argument mistakes are usage errors with their own words.
func TestUsageErrorsFromTheCommandLine(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name string
		args []string
		want string
	}{
		{"bad --output", []string{"check", "--output", "xml", tmplDir + "recipe-lowpressure.yaml"}, "foilrun: --output \"xml\": want table, csv or json\n"},
		{"bad --output on runs list", []string{"runs", "list", "--output=yaml"}, "foilrun: --output \"yaml\": want table, csv or json\n"},
		{"unknown flag", []string{"check", "--nosuch", tmplDir + "recipe-lowpressure.yaml"}, "foilrun: unknown flag: --nosuch\n"},
		{"argument count", []string{"predict"}, "foilrun: accepts 1 arg(s), received 0\n"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			code, out, errs := runCLI(t, tt.args...)
			if code != exitUsage || out != "" || errs != tt.want {
				t.Errorf("got exit %d, stdout %q, stderr %q; want exit 2, no stdout, stderr %q", code, out, errs, tt.want)
			}
		})
	}
}
