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

// TestPick: queried with Twins, each parameter is the run's logged twin
// where it has one and the plan otherwise; runs are counted by which they
// used. The values are invented; the choice is the whole check.
func TestPick(t *testing.T) {
	nan := math.NaN()
	params := []string{"growth_temperature_c", "ch4_flow_sccm"}
	if got := Twins(params, Logged); len(got) != 4 || got[1] != "growth_temperature_c_logged" || got[3] != "ch4_flow_sccm_logged" {
		t.Fatalf("Twins: got %q, want each parameter followed by its twin", got)
	}
	in := []store.Sample{
		{Code: "a", Params: []float64{1000, 980, 5, 4.5}},
		{Code: "b", Params: []float64{990, nan, 5, nan}},
		{Code: "c", Params: []float64{1010, 995, 7, nan}},
	}
	tests := []struct {
		name            string
		src             Source
		samples         []store.Sample
		want            [][]float64
		logged, planned int
		perParam        []int
	}{
		{"logged", Logged, in, [][]float64{{980, 4.5}, {990, 5}, {995, 7}}, 2, 1, []int{2, 1}},
		{"planned", Planned, []store.Sample{{Code: "a", Params: []float64{1000, 5}}}, [][]float64{{1000, 5}}, 0, 1, []int{0, 0}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			pk := Pick(tt.samples, params, tt.src)
			if pk.Logged != tt.logged || pk.Planned != tt.planned || pk.PerParam[0] != tt.perParam[0] || pk.PerParam[1] != tt.perParam[1] {
				t.Errorf("got %d logged, %d planned, per parameter %v; want %d, %d, %v", pk.Logged, pk.Planned, pk.PerParam, tt.logged, tt.planned, tt.perParam)
			}
			for i, w := range tt.want {
				if g := pk.Samples[i].Params; len(g) != len(w) || g[0] != w[0] || g[1] != w[1] {
					t.Errorf("run %s: got %v, want %v", pk.Samples[i].Code, g, w)
				}
			}
		})
	}
	if !IsTwin("growth_temperature_c_logged") || IsTwin("growth_temperature_c") || IsTwin("my_own_logged") {
		t.Error("IsTwin: want true only for a derived parameter's name with _logged")
	}
}
