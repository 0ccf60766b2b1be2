package recipe

import (
	"math"
	"testing"
)

// TestParameters derives the parameters of the low-pressure template and
// compares them with the numbers written in that file (templates/
// recipe-lowpressure.yaml: grow 1000 C for 15 min with 20 sccm H2 and
// 35 sccm CH4, anneal 1000 C 30 min, ramp 20 C/min, cool 10 C/min, 25 um
// foil of 99.8 % purity) and with Dalton's law for the partial pressures
// (p_i = x_i·P, common practice).
func TestParameters(t *testing.T) {
	r, err := LoadRecipe("../templates/recipe-lowpressure.yaml")
	if err != nil {
		t.Fatal(err)
	}
	f, _, err := Resolve(r, "", "")
	if err != nil {
		t.Fatal(err)
	}
	p := Derive(r, f)
	got := p.Parameters()
	P := got["growth_pressure_torr"] * torrPa
	want := map[string]float64{
		"growth_temperature_c": 1000, "growth_time_min": 15, "ch4_flow_sccm": 35, "h2_flow_sccm": 20,
		"ar_flow_sccm": 0, "total_flow_sccm": 55, "ch4_h2_ratio": 35.0 / 20,
		"ch4_partial_pa": P * 35 / 55, "h2_partial_pa": P * 20 / 55,
		"anneal_temperature_c": 1000, "anneal_time_min": 30, "anneal_h2_flow_sccm": 20,
		"ramp_rate_c_min": 20, "cool_rate_c_min": 10, "foil_thickness_um": 25, "foil_purity_pct": 99.8,
		"total_time_min": p.Total / 60,
	}
	const tol = 1e-9 // relative: unit conversions only
	for name, w := range want {
		g, ok := got[name]
		if !ok {
			t.Errorf("%s missing", name)
			continue
		}
		if math.Abs(g-w) > tol*math.Max(1, math.Abs(w)) {
			t.Errorf("%s = %.12g, want %.12g", name, g, w)
		}
	}
	if !(P > 0) {
		t.Errorf("growth_pressure_torr = %g, want > 0", got["growth_pressure_torr"])
	}
	for name, v := range got {
		if !IsParameter(name) {
			t.Errorf("Parameters returned %q, not listed by ParameterNames", name)
		}
		if math.IsNaN(v) || math.IsInf(v, 0) {
			t.Errorf("%s = %g, want finite", name, v)
		}
	}
}

// TestParameterNames checks every name is snake case, unique and
// documented.
func TestParameterNames(t *testing.T) {
	seen := map[string]bool{}
	for _, p := range ParameterNames() {
		if seen[p.Name] {
			t.Errorf("%s listed twice", p.Name)
		}
		seen[p.Name] = true
		for _, c := range p.Name {
			if !(c >= 'a' && c <= 'z' || c >= '0' && c <= '9' || c == '_') {
				t.Errorf("%s: want lower snake case", p.Name)
				break
			}
		}
		if p.Unit == "" || p.Description == "" {
			t.Errorf("%s: unit %q, description %q; want both", p.Name, p.Unit, p.Description)
		}
	}
}
