package history

import (
	"errors"
	"fmt"
)

// ErrInvalid is matched (errors.Is) by every error about the map, the
// sheet or a cell.
var ErrInvalid = errors.New("invalid history input")

// Error is a problem with the map, the sheet or a cell: the message, with
// the place and the value, and what to do. It matches ErrInvalid.
type Error struct {
	Msg  string
	Help string // "" when the message says it all
}

func (e *Error) Error() string { return e.Msg }

// Hint says what to do.
func (e *Error) Hint() string { return e.Help }

// Unwrap returns ErrInvalid.
func (e *Error) Unwrap() error { return ErrInvalid }

func invalid(hint, format string, args ...any) error {
	return &Error{Msg: fmt.Sprintf(format, args...), Help: hint}
}
