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

// LoggedSuffix ends the name of a derived parameter's logged twin:
// growth_temperature_c_logged is growth_temperature_c of the run's logged
// conditions.
const LoggedSuffix = "_logged"

// LoggedParameters returns the logged twins of a run's derived
// parameters: recipe.Plan.Parameters of the plan at the conditions its
// furnace-log actuals give (LoggedPlan), each named with LoggedSuffix;
// nil when the actuals give no conditions. Stored beside the planned ones
// when a run is logged with a furnace log, they let queries, rank and
// best use what happened.
func LoggedParameters(plan *recipe.Plan, actuals []store.Actual) map[string]float64 {
	lp, ok := LoggedPlan(plan, actuals, Logged)
	if !ok {
		return nil
	}
	out := map[string]float64{}
	for name, v := range lp.Parameters() {
		out[name+LoggedSuffix] = v
	}
	return out
}

// IsTwin reports whether name is the logged twin of a derived parameter.
func IsTwin(name string) bool {
	base, ok := strings.CutSuffix(name, LoggedSuffix)
	return ok && recipe.IsParameter(base)
}

// Twins returns the query columns that give params on conditions src:
// with Planned the params themselves; with Logged each param followed by
// its twin, for Pick.
func Twins(params []string, src Source) []string {
	if src == Planned {
		return params
	}
	cols := make([]string, 0, 2*len(params))
	for _, p := range params {
		cols = append(cols, p, p+LoggedSuffix)
	}
	return cols
}

// Picked is what Pick makes of samples queried with Twins.
type Picked struct {
	Samples  []store.Sample // the params' values, in the order given
	Logged   int            // runs that used a logged value for any of the params
	Planned  int            // runs that used only planned values
	PerParam []int          // per param, the runs whose value is the logged twin
}

// Pick turns samples queried with the columns Twins(params, src) into
// samples of params: with Logged each parameter is its logged twin where
// the run has one and the planned value otherwise, run by run, counted.
func Pick(samples []store.Sample, params []string, src Source) Picked {
	pk := Picked{PerParam: make([]int, len(params))}
	if src == Planned {
		pk.Samples, pk.Planned = samples, len(samples)
		return pk
	}
	pk.Samples = make([]store.Sample, 0, len(samples))
	vals := make([]float64, len(samples)*len(params)) // every sample's params, one allocation
	for n, s := range samples {
		p := vals[n*len(params) : (n+1)*len(params) : (n+1)*len(params)]
		used := false
		for i := range params {
			p[i] = math.NaN()
			if 2*i+1 < len(s.Params) {
				p[i] = s.Params[2*i]
				if tw := s.Params[2*i+1]; !math.IsNaN(tw) {
					p[i], used = tw, true
					pk.PerParam[i]++
				}
			}
		}
		if used {
			pk.Logged++
		} else {
			pk.Planned++
		}
		s.Params = p
		pk.Samples = append(pk.Samples, s)
	}
	return pk
}

// Line says how many runs used each: "3 runs on logged conditions, 2 on
// the plan".
func (pk Picked) Line() string {
	return fmt.Sprintf("%d runs on logged conditions, %d on the plan", pk.Logged, pk.Planned)
}
