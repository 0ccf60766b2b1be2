package recipe

import (
	"math"
	"strings"
	"testing"
)

// findRule returns the findings of a rule at a 1-based step (0: any step).
func findRule(fs []Finding, rule string, step int) []Finding {
	var out []Finding
	for _, f := range fs {
		if f.Rule == rule && (step == 0 || f.Step == step) {
			out = append(out, f)
		}
	}
	return out
}

// TestPumpLimitCarriedOver: a step without a pressure of its own takes
// the set-point of the step before, and the pump-limit check applies to
// it as to a set-point written on the step.
func TestPumpLimitCarriedOver(t *testing.T) {
	f := loadTestFurnace(t)
	ar := func(flow string) Flows { return Flows{{Gas: "Ar", Flow: MustParse(flow, Flow)}} }
	r := &Recipe{Name: "t", Substrate: Substrate{Thickness: MustParse("25 um", Length)}, Steps: []Step{
		{Kind: KindPurge, Duration: MustParse("1 min", Duration), Flows: ar("5 sccm"), Pressure: PressureSetting{Setpoint: MustParse("29 Pa", Pressure)}},
		{Kind: KindPurge, Duration: MustParse("1 min", Duration), Flows: ar("500 sccm")},
	}}
	p := Derive(r, f)
	sp := p.Steps[1]
	// Hand lower bound, Q = S·p (vacuum handbooks): Q = 500 sccm ×
	// 1.68875e-3 Pa·m³/s per sccm = 0.84438 Pa·m³/s at 0 °C, × 293.15/273.15
	// at the pump = 0.90619 Pa·m³/s; S = 5.5 m³/h = 1.52778e-3 m³/s;
	// p ≥ base 0.667 Pa + Q/S 593.1 Pa = 593.8 Pa. The tube and line only
	// add to it. Tolerance 0.1 %.
	const lower = 593.8
	if sp.PumpLimit < lower*0.999 {
		t.Errorf("pump limit with 500 sccm Ar = %.1f Pa, want at least %.1f Pa (base + Q/S)", sp.PumpLimit, lower)
	}
	if sp.Setpoint != 29 || sp.SetpointStep != 0 {
		t.Errorf("carried set-point = %g Pa from step %d, want 29 Pa from step 0", sp.Setpoint, sp.SetpointStep)
	}
	if sp.Pressure != sp.PumpLimit {
		t.Errorf("derived pressure = %.1f Pa, want the pump limit %.1f Pa (never below what the pump holds)", sp.Pressure, sp.PumpLimit)
	}
	if got := p.Steps[0].Pressure; got != 29 {
		t.Errorf("step 1 pressure = %g Pa, want its reachable set-point 29 Pa", got)
	}
	fs := Check(p)
	if n := len(findRule(fs, "pressure.pump-limit", 1)); n != 0 {
		t.Errorf("step 1 (5 sccm at 29 Pa) got %d pump-limit findings, want 0", n)
	}
	got := findRule(fs, "pressure.pump-limit", 2)
	if len(got) != 1 || got[0].Severity != Error {
		t.Fatalf("step 2 got pump-limit findings %v, want one error", got)
	}
	if !strings.Contains(got[0].Message, "carried over from step 1 purge") {
		t.Errorf("message %q does not say where the set-point came from", got[0].Message)
	}
	if math.IsNaN(sp.Residence) || sp.Residence <= 0 {
		t.Errorf("residence %g s at the held pressure, want a positive time", sp.Residence)
	}
}
