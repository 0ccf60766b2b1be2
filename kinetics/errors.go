package kinetics

import (
	"errors"
	"fmt"
)

// Sentinels that InputError unwraps to, one per family of input, so
// callers can test with errors.Is.
var (
	// ErrAxis is wrapped by every error about a window axis (its text, or
	// its range against the furnace).
	ErrAxis = errors.New("bad window axis")
	// ErrSuggest is wrapped by every error about what was asked of Suggest
	// (a target, a parameter to vary, a range, what to minimise).
	ErrSuggest = errors.New("bad suggest input")
	// ErrFitInput is wrapped by every error about what was given to Fit
	// (too few runs, an unknown parameter, data that cannot identify the
	// model) and by ParseFix.
	ErrFitInput = errors.New("bad fit input")
	// ErrMetric is wrapped by ParseMetric's errors.
	ErrMetric = errors.New("bad metric name")
	// ErrParams is wrapped by Params.Validate's errors.
	ErrParams = errors.New("invalid kinetics parameters")
)

// InputKind says which input an InputError is about.
type InputKind int

// The kinds of input.
const (
	KindAxis    InputKind = iota + 1 // a window axis (ParseAxis, Window)
	KindTarget                       // a suggest target (ParseTarget)
	KindVary                         // a parameter Suggest varies and its range
	KindSuggest                      // the rest of a SuggestSpec, and the recipe it changes
	KindFix                          // a parameter held fixed (ParseFix, FitSettings.Fixed and Bounds)
	KindFit                          // the observations and settings of a fit
	KindMetric                       // a metric name (ParseMetric)
	KindParams                       // model parameters out of their domain (Params.Validate)
)

var kindNames = map[InputKind]string{
	KindAxis: "axis", KindTarget: "target", KindVary: "vary", KindSuggest: "suggest",
	KindFix: "fix", KindFit: "fit", KindMetric: "metric", KindParams: "params",
}

// String names the kind: "axis", "target", "vary", "suggest", "fix",
// "fit", "metric" or "params".
func (k InputKind) String() string {
	if n, ok := kindNames[k]; ok {
		return n
	}
	return fmt.Sprintf("InputKind(%d)", int(k))
}

// Reason says more precisely what is wrong, for callers that branch on it
// (a command choosing its hint); most errors have none.
type Reason string

// The reasons callers branch on.
const (
	// ReasonUnknownName: a parameter, quantity or metric name that is not
	// in the vocabulary.
	ReasonUnknownName Reason = "unknown name"
	// ReasonRenamed: an old spelling of a name; the message names the new
	// one.
	ReasonRenamed Reason = "renamed"
	// ReasonOneTemperature: every run of a fit grows at one temperature
	// while an activation energy is free.
	ReasonOneTemperature Reason = "one temperature"
	// ReasonNotPredicted: a quantity the parameters cannot predict, such
	// as nuclei density from a coverage-only calibration (Params.Predicts).
	ReasonNotPredicted Reason = "not predicted"
)

// InputError is an error about what a caller gave the package: a parse
// error of a command-line style value, or data a computation cannot use.
// Msg is a lowercase context chain with the bad value quoted and names no
// command-line flag; Advice, when not empty, says what to do and fits on a
// second line (Hint returns it, for callers that print hints of any error). It unwraps to the sentinel of its Kind (ErrAxis,
// ErrSuggest, ErrFitInput, ErrMetric or ErrParams).
type InputError struct {
	Kind   InputKind
	Reason Reason // "" unless a caller may want to branch on it
	Msg    string
	Advice string
}

func (e *InputError) Error() string { return e.Msg }

// Hint returns what to do about the error, or "".
func (e *InputError) Hint() string { return e.Advice }

// Unwrap returns the sentinel of the error's kind.
func (e *InputError) Unwrap() error {
	switch e.Kind {
	case KindAxis:
		return ErrAxis
	case KindTarget, KindVary, KindSuggest:
		return ErrSuggest
	case KindFix, KindFit:
		return ErrFitInput
	case KindMetric:
		return ErrMetric
	case KindParams:
		return ErrParams
	}
	return nil
}

// inputErr makes an InputError of the kind with a formatted message.
func inputErr(kind InputKind, format string, args ...any) *InputError {
	return &InputError{Kind: kind, Msg: fmt.Sprintf(format, args...)}
}

// hinted sets the error's hint and returns it.
func (e *InputError) hinted(hint string) *InputError {
	e.Advice = hint
	return e
}

// because sets the error's reason and returns it.
func (e *InputError) because(r Reason) *InputError {
	e.Reason = r
	return e
}
