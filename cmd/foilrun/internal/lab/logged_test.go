package lab

import (
	"math"
	"testing"

	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/store"
)

// TestStepConditions: the means of a step's temperature, pressure and
// flows become its conditions (steps 1-based in the log, 0-based in the
// plan); other quantities, NaN means, non-positive temperatures and steps
// outside the plan are left out. The values are invented; the mapping is
// the whole check.
func TestStepConditions(t *testing.T) {
	nan := math.NaN()
	acts := []store.Actual{
		{Step: 6, Quantity: "temperature", Mean: 1267.15},
		{Step: 6, Quantity: "pressure", Mean: 60},
		{Step: 6, Quantity: "flow:CH4", Mean: 2e-7},
		{Step: 6, Quantity: "duration", Mean: 900},
		{Step: 6, Quantity: "thermocouple:TC2", Mean: 1250},
		{Step: 4, Quantity: "temperature", Mean: nan},
		{Step: 4, Quantity: "pressure", Mean: 30},
		{Step: 5, Quantity: "temperature", Mean: 0},
		{Step: 12, Quantity: "temperature", Mean: 1000},
	}
	got := StepConditions(acts, 9)
	want := []recipe.Conditions{
		{Step: 5, Temperature: 1267.15, Pressure: 60, Flows: map[string]float64{"CH4": 2e-7}},
		{Step: 3, Pressure: 30},
		{Step: 4},
	}
	if len(got) != len(want) {
		t.Fatalf("got %d conditions %+v, want %d", len(got), got, len(want))
	}
	for i := range want {
		g, w := got[i], want[i]
		if g.Step != w.Step || g.Temperature != w.Temperature || g.Pressure != w.Pressure || len(g.Flows) != len(w.Flows) || g.Flows["CH4"] != w.Flows["CH4"] {
			t.Errorf("conditions %d: got %+v, want %+v", i, g, w)
		}
	}
	p := &recipe.Plan{Steps: make([]recipe.StepPlan, 9)}
	if plan, ok := LoggedPlan(p, acts, Planned); ok || plan != p {
		t.Errorf("Planned: got a logged plan, want the plan itself")
	}
	if plan, ok := LoggedPlan(p, nil, Logged); ok || plan != p {
		t.Errorf("no actuals: got a logged plan, want the plan itself")
	}
	for _, s := range []string{"logged", "planned"} {
		if src, err := ParseSource(s); err != nil || src.String() != s {
			t.Errorf("ParseSource(%q): got %v, %v", s, src, err)
		}
	}
	if _, err := ParseSource("measured"); err == nil {
		t.Error(`ParseSource("measured"): got no error`)
	}
}
