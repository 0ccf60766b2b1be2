package safety

import "fmt"

// Severity ranks a finding. Stop is above Warning: `foilrun safety` exits
// with status 1 when any finding is at the stop level.
type Severity int

// Severities, from least to most serious.
const (
	Note Severity = iota
	Warning
	Stop
)

// String returns "note", "warning" or "stop".
func (s Severity) String() string {
	switch s {
	case Note:
		return "note"
	case Warning:
		return "warning"
	case Stop:
		return "stop"
	}
	return fmt.Sprintf("severity(%d)", int(s))
}

// MarshalText writes the severity as its name.
func (s Severity) MarshalText() ([]byte, error) { return []byte(s.String()), nil }

// Number is one figure a finding rests on, in display units.
type Number struct {
	Name  string  `json:"name"`
	Value float64 `json:"value"`
	Unit  string  `json:"unit"`
}

// Finding is one result of the analysis: the rule, the step (0 for the
// run or the site), what was found with its numbers, and what the operator
// should do.
type Finding struct {
	Severity Severity `json:"severity"`
	Step     int      `json:"step"`      // 1-based; 0 for the whole run or the site
	StepName string   `json:"step_name"` // "4 grow (main growth)", or ""
	Rule     string   `json:"rule"`      // stable identifier, e.g. "exhaust.dilution"
	Message  string   `json:"message"`   // what was found, with the numbers
	Action   string   `json:"action"`    // what the operator should do
	Numbers  []Number `json:"numbers,omitempty"`
}

// HasStop reports whether any finding is at the stop level.
func HasStop(fs []Finding) bool {
	for _, f := range fs {
		if f.Severity == Stop {
			return true
		}
	}
	return false
}

// Count returns the number of findings at severity s.
func Count(fs []Finding, s Severity) int {
	n := 0
	for _, f := range fs {
		if f.Severity == s {
			n++
		}
	}
	return n
}

// Disclaimer is printed with every safety output, on screen and on paper.
const Disclaimer = "These figures support, and do not replace, the site's gas-safety review, " +
	"the local fire and compressed-gas codes, and the people licensed to approve this set-up. " +
	"foilrun never judges a set-up safe: \"no stop-level findings\" means only that none of its rules fired."

// Verdict returns the one-line summary of findings: how many at each level,
// and "no stop-level findings" when there are none. It never says "safe".
func Verdict(fs []Finding) string {
	s, w, n := Count(fs, Stop), Count(fs, Warning), Count(fs, Note)
	head := "no stop-level findings"
	if s > 0 {
		head = fmt.Sprintf("%d stop-level finding%s: do not run until resolved", s, plural(s))
	}
	return fmt.Sprintf("%s; %d warning%s, %d note%s", head, w, plural(w), n, plural(n))
}

func plural(n int) string {
	if n == 1 {
		return ""
	}
	return "s"
}
