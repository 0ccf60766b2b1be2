package recipe

import "fmt"

// Severity ranks a finding.
type Severity int

// Severities, from least to most serious. Errors make `foilrun check` exit
// with status 1.
const (
	Note Severity = iota
	Warning
	Error
)

// String returns "note", "warning" or "error".
func (s Severity) String() string {
	switch s {
	case Note:
		return "note"
	case Warning:
		return "warning"
	case Error:
		return "error"
	}
	return fmt.Sprintf("severity(%d)", int(s))
}

// MarshalText writes the severity as its name.
func (s Severity) MarshalText() ([]byte, error) { return []byte(s.String()), nil }

// Finding is one result of a check: what rule, at which step, with the
// numbers that decided it and what to do about it.
type Finding struct {
	Severity Severity `json:"severity"`
	Step     int      `json:"step"`      // 1-based step number; 0 for the whole recipe
	StepName string   `json:"step_name"` // "4 grow (main growth)", or "" for the recipe
	Rule     string   `json:"rule"`      // stable identifier, e.g. "temperature.copper-melting"
	Message  string   `json:"message"`   // what was found, with the numbers
	Hint     string   `json:"hint"`      // what to do
	Pos      Pos      `json:"-"`         // where in the recipe file, when known
	Line     int      `json:"line,omitempty"`
}

// HasErrors reports whether any finding is an error.
func HasErrors(fs []Finding) bool {
	for _, f := range fs {
		if f.Severity == Error {
			return true
		}
	}
	return false
}

// UnmarshalText reads a severity name.
func (s *Severity) UnmarshalText(b []byte) error {
	for _, v := range []Severity{Note, Warning, Error} {
		if v.String() == string(b) {
			*s = v
			return nil
		}
	}
	return fmt.Errorf("unknown severity %q, want note, warning or error", b)
}
