package store

import (
	"errors"
	"fmt"
	"time"
)

// Override records that a run was logged from a recipe that check or
// safety refused: who overrode, why, when, and the findings they saw.
type Override struct {
	Reason   string            `json:"reason"`
	Operator string            `json:"operator"`
	At       time.Time         `json:"at,omitzero"`
	Findings []OverrideFinding `json:"findings"`
}

// OverrideFinding is one refusing finding as it was shown when the run
// was logged: check errors and safety stops, in their words.
type OverrideFinding struct {
	Source   string `json:"source"` // "check" or "safety"
	Severity string `json:"severity"`
	Step     string `json:"step"` // step name, "" for the whole recipe
	Rule     string `json:"rule"`
	Message  string `json:"message"`
}

// Validate checks an override: a reason given, at least one finding, every text within bounds and the time not in the future.
func (o Override) Validate(now time.Time) error {
	if err := checkTime(o.At, now, true); err != nil {
		return fmt.Errorf("at: %v", err)
	}
	if o.Reason == "" {
		return errors.New("reason: empty; say why the run was logged despite the findings")
	}
	if len(o.Findings) == 0 {
		return errors.New("findings: none; an override records the findings it overrode")
	}
	for _, f := range []struct {
		name, v string
		max     int
	}{{"reason", o.Reason, MaxNoteLength}, {"operator", o.Operator, MaxNameLength}} {
		if err := checkText(f.v, f.max); err != nil {
			return fmt.Errorf("%s: %v", f.name, err)
		}
	}
	for i, f := range o.Findings {
		if f.Source != "check" && f.Source != "safety" {
			return fmt.Errorf("findings[%d].source %s: want \"check\" or \"safety\"", i, quoteShort(f.Source))
		}
		for _, t := range []struct {
			name, v string
			max     int
		}{{"severity", f.Severity, MaxNameLength}, {"step", f.Step, MaxNameLength}, {"rule", f.Rule, MaxNameLength}, {"message", f.Message, MaxNoteLength}} {
			if err := checkText(t.v, t.max); err != nil {
				return fmt.Errorf("findings[%d].%s: %v", i, t.name, err)
			}
		}
	}
	return nil
}
