package lab

import (
	"fmt"
	"math"
	"strings"

	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/store"
)

// Source says which conditions the model sees of a logged run.
type Source int

// Sources of a run's conditions.
const (
	// Logged: the logged conditions where the run has furnace-log
	// actuals, the plan otherwise (run by run).
	Logged Source = iota
	// Planned: always the plan.
	Planned
)

// String is "logged" or "planned", as the --conditions flag spells it.
func (s Source) String() string {
	if s == Planned {
		return "planned"
	}
	return "logged"
}

// ParseSource reads "logged" or "planned".
func ParseSource(s string) (Source, error) {
	switch s {
	case "logged":
		return Logged, nil
	case "planned":
		return Planned, nil
	}
	return Logged, fmt.Errorf("conditions %q: want logged or planned", s)
}

// StepConditions turns a run's stored furnace-log actuals into the logged
// conditions of its steps: per step, the mean of the control
// thermocouple ("temperature"), of the pressure ("pressure") and of each
// gas's flow ("flow:<gas>", mol/s, already converted to the true gas when
// the log reads a calibration-gas equivalent). A mean that is not a
// finite number, or a temperature or pressure that is not above zero, is
// left out, so that quantity keeps the plan. Steps without actuals get no
// conditions. Steps outside the plan (1-based Step above steps) are left
// out.
func StepConditions(actuals []store.Actual, steps int) []recipe.Conditions {
	byStep := map[int]*recipe.Conditions{}
	var order []int
	for _, a := range actuals {
		if a.Step < 1 || a.Step > steps || math.IsNaN(a.Mean) || math.IsInf(a.Mean, 0) {
			continue
		}
		gasName, isFlow := strings.CutPrefix(a.Quantity, "flow:")
		if !isFlow && a.Quantity != "temperature" && a.Quantity != "pressure" {
			continue
		}
		c := byStep[a.Step]
		if c == nil {
			c = &recipe.Conditions{Step: a.Step - 1}
			byStep[a.Step] = c
			order = append(order, a.Step)
		}
		switch {
		case isFlow:
			if c.Flows == nil {
				c.Flows = map[string]float64{}
			}
			c.Flows[gasName] = math.Max(0, a.Mean)
		case a.Quantity == "temperature" && a.Mean > 0:
			c.Temperature = a.Mean
		case a.Quantity == "pressure" && a.Mean > 0:
			c.Pressure = a.Mean
		}
	}
	out := make([]recipe.Conditions, 0, len(order))
	for _, s := range order {
		out = append(out, *byStep[s])
	}
	return out
}

// LoggedPlan returns the plan the model sees of a run: with src Logged
// and actuals that give conditions, a copy of plan with those steps at
// their logged conditions (recipe.Plan.WithConditions) and true; else the
// plan itself and false.
func LoggedPlan(plan *recipe.Plan, actuals []store.Actual, src Source) (*recipe.Plan, bool) {
	if src == Planned {
		return plan, false
	}
	cs := StepConditions(actuals, len(plan.Steps))
	if len(cs) == 0 {
		return plan, false
	}
	return plan.WithConditions(cs), true
}
