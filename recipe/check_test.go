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

// TestCopperLossModels: the vacuum (Hertz–Knudsen) bound applies to a
// pumped step, the diffusion-limited film estimate above 1 Torr. Hand
// values at 1040 °C for 25 µm foil in Ar on the template tube (δ = 11 mm;
// see gas.TestCopperDiffusionByHand for the arithmetic): vacuum 8.2952
// µm/h, so 4.14761 µm in 30 min and 8.2952 µm in 1 h (33 % of the foil: a
// warning); diffusion at 1 atm 8.5596e-4 µm/h → 4.2798e-4 µm in 30 min,
// at 5 Torr 0.130106 µm/h → 0.065053 µm. Tolerance 1e-4.
func TestCopperLossModels(t *testing.T) {
	cases := []struct {
		name, pressure, flow, dur string
		model                     CopperModel
		vacuumUm, diffUm          float64
		sev                       Severity
	}{
		{"1 atm", "1 atm", "500 sccm", "30 min", CopperDiffusion, 4.14761, 4.2798e-4, Note},
		{"5 Torr", "5 Torr", "50 sccm", "30 min", CopperDiffusion, 4.14761, 0.065053, Note},
		{"pumped", "pump", "", "60 min", CopperVacuumBound, 8.2952, 0, Warning},
	}
	f := loadTestFurnace(t)
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			st := Step{Kind: KindAnneal, Temperature: MustParse("1040 C", Temperature), Duration: MustParse(c.dur, Duration)}
			if c.pressure == "pump" {
				st.Pressure = PressureSetting{Pump: true}
			} else {
				st.Pressure = PressureSetting{Setpoint: MustParse(c.pressure, Pressure)}
				st.Flows = Flows{{Gas: "Ar", Flow: MustParse(c.flow, Flow)}}
			}
			r := &Recipe{Name: "t", Substrate: Substrate{Thickness: MustParse("25 um", Length)}, StartTemperature: MustParse("1040 C", Temperature), Steps: []Step{st}}
			p := Derive(r, f)
			sp := p.Steps[0]
			if sp.CopperModel != c.model {
				t.Errorf("model %q, want %q", sp.CopperModel, c.model)
			}
			if got := sp.CopperLossVacuum * 1e6; math.Abs(got-c.vacuumUm)/c.vacuumUm > 1e-4 {
				t.Errorf("vacuum bound %.6g µm, want %.6g", got, c.vacuumUm)
			}
			if got := sp.CopperLossDiffusion * 1e6; c.diffUm == 0 && got != 0 || c.diffUm > 0 && math.Abs(got-c.diffUm)/c.diffUm > 1e-4 {
				t.Errorf("diffusion estimate %.6g µm, want %.6g", got, c.diffUm)
			}
			fs := findRule(Check(p), "copper.evaporation", 1)
			if len(fs) != 1 || fs[0].Severity != c.sev {
				t.Fatalf("got copper findings %+v, want one %s", fs, c.sev)
			}
			if c.model == CopperDiffusion && (!strings.Contains(fs[0].Message, string(CopperDiffusion)+", which applies") || !strings.Contains(fs[0].Message, "vacuum bound")) {
				t.Errorf("message %q does not show both figures and which applies", fs[0].Message)
			}
		})
	}
}

// TestEvacuationsBefore: a pump-down counts as a cycle when gas filled the
// tube since the last one; the factors multiply. Hand values: 1 atm →
// 20 mTorr is 20e-3/760 = 2.63158e-5; pumping on after a leak check to
// 10 mTorr deepens the same cycle (total 10e-3/760 = 1.31579e-5); an Ar
// fill to 1 atm and a second pump-down to 20 mTorr make two cycles,
// (20e-3/760)² = 6.92521e-10.
func TestEvacuationsBefore(t *testing.T) {
	f := loadTestFurnace(t)
	pump := func(until string) Step { return Step{Kind: KindPump, Until: MustParse(until, Pressure)} }
	leak := Step{Kind: KindLeakCheck, Duration: MustParse("1 min", Duration), MaxRise: MustParse("5 mTorr/min", PressureRate)}
	fill := Step{Kind: KindPurge, Duration: MustParse("1 min", Duration), Flows: Flows{{Gas: "Ar", Flow: MustParse("1 slm", Flow)}},
		Pressure: PressureSetting{Setpoint: MustParse("1 atm", Pressure)}}
	cases := []struct {
		name   string
		steps  []Step
		cycles int
		factor float64
	}{
		{"one pump-down", []Step{pump("20 mTorr"), leak}, 1, 2.63158e-5},
		{"pumped on after the leak check", []Step{pump("20 mTorr"), leak, pump("10 mTorr")}, 1, 1.31579e-5},
		{"two cycles", []Step{pump("20 mTorr"), fill, pump("20 mTorr")}, 2, 6.92521e-10},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			r := &Recipe{Name: "t", Substrate: Substrate{Thickness: MustParse("25 um", Length)}, Steps: c.steps}
			p := Derive(r, f)
			ev := p.EvacuationsBefore(len(c.steps))
			if ev.Cycles != c.cycles || math.Abs(ev.Factor-c.factor)/c.factor > 1e-5 {
				t.Errorf("got %d cycles, factor %.6g; want %d, %.6g", ev.Cycles, ev.Factor, c.cycles, c.factor)
			}
		})
	}
	site := &Site{PurgeByEvacuation: &EvacuationPolicy{Allowed: true}}
	if ok, need := site.EvacuationPurges(Evacuations{Cycles: 1}); ok || need != DefaultEvacuationCycles {
		t.Errorf("default policy with 1 cycle: ok %v need %d, want false and %d", ok, need, DefaultEvacuationCycles)
	}
}

// TestCopperMeltingOnce: a recipe held at 1070 °C is 1084.62 − 1070 =
// 14.62 K below copper's melting point (ITS-90 freezing point), closer
// than 3 × the template's 10 K thermocouple margin = 30 K: one warning for
// the recipe at its first hot step, listing the ramp, anneal and grow but
// not the cool, and saying what the threshold means.
func TestCopperMeltingOnce(t *testing.T) {
	T := MustParse("1070 C", Temperature)
	r := &Recipe{Name: "t", Substrate: Substrate{Thickness: MustParse("25 um", Length)}, Steps: []Step{
		{Kind: KindRamp, To: T, Rate: MustParse("20 C/min", TemperatureRate)},
		{Kind: KindAnneal, Temperature: T, Duration: MustParse("10 min", Duration)},
		{Kind: KindGrow, Temperature: T, Duration: MustParse("10 min", Duration), Flows: Flows{{Gas: "CH4", Flow: MustParse("5 sccm", Flow)}}},
		{Kind: KindCool, To: MustParse("80 C", Temperature), Rate: MustParse("10 C/min", TemperatureRate)},
	}}
	fs := findRule(Check(Derive(r, loadTestFurnace(t))), "temperature.copper-melting", 0)
	if len(fs) != 1 {
		t.Fatalf("got %d copper-melting findings, want 1: %+v", len(fs), fs)
	}
	f := fs[0]
	if f.Severity != Warning || f.Step != 1 {
		t.Errorf("got %s at step %d, want a warning at step 1", f.Severity, f.Step)
	}
	for _, want := range []string{"steps 1 ramp, 2 anneal, 3 grow)", "within 14.6 K", "3 × the 10 K thermocouple margin = 30 K", "one margin for the thermocouple"} {
		if !strings.Contains(f.Message, want) {
			t.Errorf("message %q lacks %q", f.Message, want)
		}
	}
	if strings.Contains(f.Message, "cool") {
		t.Errorf("message %q lists the cool step", f.Message)
	}
}
