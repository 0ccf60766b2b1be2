package recipe

import (
	"math"
	"strings"
	"testing"
)

// coolRecipe holds 1000 °C and cools to 100 °C at 8 C/min (with an
// optional fixed duration), then vents.
func coolRecipe(duration string) *Recipe {
	cool := Step{Kind: KindCool, To: MustParse("100 C", Temperature), Rate: MustParse("8 C/min", TemperatureRate)}
	if duration != "" {
		cool.Duration = MustParse(duration, Duration)
	}
	return &Recipe{Name: "t", Substrate: Substrate{Thickness: MustParse("25 um", Length)}, StartTemperature: MustParse("1000 C", Temperature),
		Steps: []Step{cool, {Kind: KindVent, Flows: Flows{{Gas: "Ar", Flow: MustParse("500 sccm", Flow)}}}}}
}

// TestNewtonianCoolingByHand: Newton's law of cooling T(t) = Ta +
// (T0 − Ta)·e^(−t/τ) (Incropera & DeWitt, lumped capacitance) with τ =
// 40 min and Ta = 25 °C cannot follow 8 C/min below Tc = Ta + R·τ =
// 25 + 8·40 = 345 °C. Hand calculation, 1000 → 100 °C: (1000 − 345)/8 =
// 81.875 min at the programmed rate, then 40·ln((345 − 25)/(100 − 25)) =
// 40·ln(4.26667) = 58.0333 min natural: 139.908 min, not 112.5. With a
// fixed 100 min the furnace is at 25 + 320·e^(−18.125/40) = 228.404 °C
// when the step ends, above 200 °C: the vent is hot. Tolerance 1e-4.
func TestNewtonianCoolingByHand(t *testing.T) {
	f := loadTestFurnace(t)
	f.Cooling = &Cooling{TimeConstant: MustParse("40 min", Duration), Ambient: MustParse("25 C", Temperature)}
	if got := Celsius(f.NaturalBelow(8.0 / 60)); math.Abs(got-345) > 1e-9 {
		t.Errorf("natural limit of 8 C/min at %.6g °C, want 345 °C (Ta + R·τ)", got)
	}
	p := Derive(coolRecipe(""), f)
	if got := p.Steps[0].Duration / 60; math.Abs(got-139.908)/139.908 > 1e-4 {
		t.Errorf("cool 1000 → 100 °C takes %.4f min, want 139.908 min (hand)", got)
	}
	if got := p.Steps[0].ProgrammedDuration / 60; math.Abs(got-112.5) > 1e-9 {
		t.Errorf("programmed time %.4f min, want 112.5", got)
	}
	fs := findRule(Check(p), "ramp.natural-cooling", 1)
	if len(fs) != 1 || fs[0].Severity != Warning || !strings.Contains(fs[0].Message, "below 345.0 °C") || !strings.Contains(fs[0].Message, "139.9 min, not the 112.5 min") {
		t.Errorf("got natural-cooling findings %+v, want one warning naming 345.0 °C and 139.9 min", fs)
	}
	// A fixed duration: the step ends where natural cooling got to.
	p = Derive(coolRecipe("100 min"), f)
	if got := Celsius(p.Steps[0].T1); math.Abs(got-228.404) > 1e-3 {
		t.Errorf("after 100 min the furnace is at %.4f °C, want 228.404 °C (hand)", got)
	}
	if fs := findRule(Check(p), "sequence.vent-hot", 2); len(fs) != 1 {
		t.Errorf("got %d vent-hot findings, want 1: the vent comes at 228 °C", len(fs))
	}
	// Without cooling data the programmed rate stands (the old plan).
	if got := Derive(coolRecipe(""), loadTestFurnace(t)).Steps[0].Duration / 60; math.Abs(got-112.5) > 1e-9 {
		t.Errorf("no cooling data: %.4f min, want 112.5", got)
	}
}

// TestCoolingTable: a table of natural rates, linear between points. Hand
// calculation with rates 2 C/min at 300 °C and 10 C/min at 700 °C, cooling
// 1000 → 200 °C at 8 C/min: the natural rate reaches 8 C/min at
// 300 + 400·(6/8) = 600 °C; (1000 − 600)/8 = 50 min; from 600 to 300 °C
// r(T) = 2 + (T − 300)/50 C/min, ∫ dT/r = 50·ln(8/2) = 69.3147 min; from
// 300 to 200 °C below the table r = 2·(T − 25)/275 C/min, ∫ = 137.5·
// ln(275/175) = 62.1478 min. Total 181.4625 min. Tolerance 1e-4
// (Simpson's rule).
func TestCoolingTable(t *testing.T) {
	f := loadTestFurnace(t)
	f.Cooling = &Cooling{Rates: []CoolingRate{
		{Temperature: MustParse("300 C", Temperature), Rate: MustParse("2 C/min", TemperatureRate)},
		{Temperature: MustParse("700 C", Temperature), Rate: MustParse("10 C/min", TemperatureRate)},
	}}
	if got := Celsius(f.NaturalBelow(8.0 / 60)); math.Abs(got-600) > 1e-6 {
		t.Errorf("table: natural limit of 8 C/min at %.6g °C, want 600 °C", got)
	}
	got := f.CoolTime(Kelvin(1000), Kelvin(200), 8.0/60) / 60
	if math.Abs(got-181.4625)/181.4625 > 1e-4 {
		t.Errorf("table: cool 1000 → 200 °C takes %.4f min, want 181.4625 (hand)", got)
	}
	// CoolReach is the inverse of CoolTime.
	T := f.CoolReach(Kelvin(1000), Kelvin(100), 8.0/60, got*60)
	if math.Abs(Celsius(T)-200) > 0.05 {
		t.Errorf("table: after %.4f min at %.3f °C, want 200 °C", got, Celsius(T))
	}
}
