package recipe

import (
	"math"
	"os"
	"strings"
	"testing"
)

// lowPressurePlan derives templates/recipe-lowpressure.yaml with its grow
// step ("temperature: 1000 C / duration: 15 min / flows: {H2: 20 sccm,
// CH4: 35 sccm}") replaced by grow, on the template furnace.
func lowPressurePlan(t *testing.T, grow string) *Plan {
	t.Helper()
	data, err := os.ReadFile("../templates/recipe-lowpressure.yaml")
	if err != nil {
		t.Fatal(err)
	}
	const planned = "    temperature: 1000 C\n    duration: 15 min\n    flows: {H2: 20 sccm, CH4: 35 sccm}\n"
	text := string(data)
	if grow != "" {
		if !strings.Contains(text, planned) {
			t.Fatal("the template's grow step changed; update lowPressurePlan")
		}
		text = strings.Replace(text, planned, grow, 1)
	}
	r, err := ParseRecipe("../templates/recipe-lowpressure.yaml", []byte(text))
	if err != nil {
		t.Fatal(err)
	}
	f, _, err := Resolve(r, "", "")
	if err != nil {
		t.Fatal(err)
	}
	return Derive(r, f)
}

// TestWithConditions checks the logged conditions of the grow step
// against two things outside WithConditions: Derive of the same recipe
// written at those conditions (the one derivation), and Dalton's law
// p_i = x_i·P with x_i the molar flow fraction (common practice). The
// logged flows are 31.5 sccm CH4 (10 % below the plan) and 20 sccm H2, the
// temperature 994 °C (41 K... 6 K below 1000 °C), the pressure 500 mTorr.
func TestWithConditions(t *testing.T) {
	base := lowPressurePlan(t, "")
	const grow = 5 // 0-based: "6 grow (growth)"
	if base.Steps[grow].Step.Kind != KindGrow {
		t.Fatalf("step %d is %s, want grow", grow, base.Steps[grow].Step.Kind)
	}
	sccm := MustParse("1 sccm", Flow).SI
	T := Kelvin(994)
	P := MustParse("1 Torr", Pressure).SI // above the ~76 Pa the pump holds at these flows, so Derive keeps it as set
	flows := map[string]float64{"CH4": 31.5 * sccm, "H2": 20 * sccm}
	cases := []struct {
		name string
		cond Conditions
		want string // the grow step Derive must agree with
	}{
		{"open to the pump", Conditions{Step: grow, Temperature: T, Flows: flows},
			"    temperature: 994 C\n    duration: 15 min\n    flows: {H2: 20 sccm, CH4: 31.5 sccm}\n"},
		{"logged pressure", Conditions{Step: grow, Temperature: T, Flows: flows, Pressure: P},
			"    temperature: 994 C\n    duration: 15 min\n    pressure: 1 Torr\n    flows: {H2: 20 sccm, CH4: 31.5 sccm}\n"},
	}
	const tol = 1e-9 // relative: the same arithmetic in another order at most
	near := func(a, b float64) bool {
		return a == b || math.Abs(a-b) <= tol*math.Max(math.Abs(a), math.Abs(b)) || math.IsNaN(a) && math.IsNaN(b)
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			got := base.WithConditions([]Conditions{c.cond}).Steps[grow]
			want := lowPressurePlan(t, c.want).Steps[grow]
			for _, f := range []struct {
				name      string
				got, want float64
			}{
				{"T0", got.T0, want.T0}, {"T1", got.T1, want.T1}, {"pressure", got.Pressure, want.Pressure},
				{"total flow", got.TotalFlow, want.TotalFlow}, {"pCH4", got.PCH4, want.PCH4}, {"pH2", got.PH2, want.PH2},
				{"CH4:H2", got.CH4H2Ratio, want.CH4H2Ratio}, {"volumetric flow", got.VolumetricFlow, want.VolumetricFlow},
				{"residence", got.Residence, want.Residence}, {"Reynolds", got.Reynolds, want.Reynolds},
				{"Knudsen", got.Knudsen, want.Knudsen}, {"supersaturation", got.Supersaturation, want.Supersaturation},
				{"copper loss", got.CopperLoss, want.CopperLoss}, {"pump limit", got.PumpLimit, want.PumpLimit},
			} {
				if !near(f.got, f.want) {
					t.Errorf("%s: got %.12g, want %.12g (Derive of the recipe at those conditions)", f.name, f.got, f.want)
				}
			}
			// Dalton: pCH4 = 31.5/51.5·P (common practice).
			if w := got.Pressure * 31.5 / 51.5; !near(got.PCH4, w) {
				t.Errorf("pCH4: got %.12g Pa, want %.12g Pa (Dalton)", got.PCH4, w)
			}
			if c.cond.Pressure > 0 && got.Pressure != P {
				t.Errorf("pressure: got %g Pa, want the logged %g Pa", got.Pressure, P)
			}
		})
	}
	if got, want := base.Steps[grow].T0, Kelvin(1000); got != want {
		t.Errorf("the original plan changed: T0 got %g K, want %g K", got, want)
	}
	if got, want := base.Steps[grow].Flows[1].Molar, 35*sccm; !near(got, want) {
		t.Errorf("the original plan changed: CH4 got %g mol/s, want %g mol/s", got, want)
	}
}

// TestWithConditionsRamp: a ramp logged 12 K low on average keeps its
// planned rate (T1 − T0 unchanged) and is shifted by 12 K; steps without
// conditions are the plan's; a logged gas the step does not plan is
// ignored, a planned one logged takes the logged flow.
func TestWithConditionsRamp(t *testing.T) {
	base := lowPressurePlan(t, "")
	const ramp = 3 // "4 ramp"
	sp := base.Steps[ramp]
	ar, h2 := MustParse("2 sccm", Flow).SI, MustParse("19 sccm", Flow).SI
	got := base.WithConditions([]Conditions{{Step: ramp, Temperature: sp.MeanTemperature() - 12, Flows: map[string]float64{"Ar": ar, "H2": h2}}})
	g := got.Steps[ramp]
	if math.Abs((g.T1-g.T0)-(sp.T1-sp.T0)) > 1e-9 || math.Abs(g.T0-(sp.T0-12)) > 1e-9 {
		t.Errorf("ramp: got %g→%g K, want %g→%g K", g.T0, g.T1, sp.T0-12, sp.T1-12)
	}
	if len(g.Flows) != 1 || g.Flows[0].Gas.Symbol != "H2" || g.Flows[0].Molar != h2 {
		t.Errorf("ramp flows: got %+v, want H2 alone at the logged 19 sccm", g.Flows)
	}
	if want := h2; math.Abs(g.TotalFlow-want) > 1e-15 {
		t.Errorf("total flow: got %g, want %g mol/s", g.TotalFlow, want)
	}
	if got.Steps[ramp+1].T0 != base.Steps[ramp+1].T0 || got.Total != base.Total {
		t.Errorf("other steps changed: anneal %g K, total %g s", got.Steps[ramp+1].T0, got.Total)
	}
}
