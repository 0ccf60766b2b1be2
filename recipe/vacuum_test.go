package recipe

import (
	"math"
	"testing"

	"github.com/foilrun/foilrun/recipe/gas"
)

// Air at 20 °C: molar mass 28.9651 g/mol (from memory, as in the gas
// table), viscosity from the gas table.
func air(t *testing.T) gas.Gas {
	g, err := gas.Lookup("air")
	if err != nil {
		t.Fatal(err)
	}
	return g
}

func TestMolecularConductanceHandbook(t *testing.T) {
	// Vacuum handbooks (O'Hanlon, A User's Guide to Vacuum Technology):
	// long round tube, air at 20 °C, C = 12.1·d³/l L/s with d, l in cm.
	a := air(t)
	for _, c := range []struct{ dcm, lcm float64 }{{1, 100}, {2.2, 50}, {1.6, 150}} {
		got := MolecularConductance(c.dcm/100, c.lcm/100, 293.15, a.MolarMass.V) * 1000 // L/s
		want := 12.1 * math.Pow(c.dcm, 3) / c.lcm
		if math.Abs(got-want)/want > 0.01 {
			t.Errorf("d=%g cm l=%g cm: molecular C = %.4g L/s, want %.4g (handbook 12.1 d³/l), tol 1 %%", c.dcm, c.lcm, got, want)
		}
	}
}

func TestViscousConductanceHandbook(t *testing.T) {
	// Vacuum handbooks: air at 20 °C, C = 135·d⁴·p̄/l L/s with d, l in cm
	// and p̄ in mbar (Poiseuille with η ≈ 18.2 µPa·s).
	a := air(t)
	eta := a.Viscosity(293.15)
	got := ViscousConductance(0.02, 1.0, 1000, eta) * 1000 // d=2 cm, l=100 cm, p̄=10 mbar
	want := 135 * math.Pow(2, 4) * 10 / 100
	if math.Abs(got-want)/want > 0.02 {
		t.Errorf("viscous C = %.4g L/s, want %.4g (handbook 135 d⁴ p̄/l), tol 2 %%", got, want)
	}
}

func TestPumpDownWorkedExample(t *testing.T) {
	// Vacuum handbooks: V = 1 m³, S = 0.1 m³/s, 1000 → 100 mbar: t = (V/S) ln 10 = 23.0 s.
	got := PumpDown(1, 0.1, 1000e2, 100e2)
	if math.Abs(got-23.0) > 0.05 {
		t.Errorf("pump-down time = %.3f s, want 23.0 s (handbook worked example)", got)
	}
	if PumpDown(1, 0.1, 100, 200) != 0 {
		t.Error("pump-down to a higher pressure should take no time")
	}
}

func TestPumpLimitedPressureLimits(t *testing.T) {
	f := loadTestFurnace(t)
	// No throughput: the pump holds its base pressure.
	if got := f.PumpLimitedPressure(0, nil, nil); got != f.Vacuum.BasePressure.SI {
		t.Errorf("no flow: pressure %g Pa, want base pressure %g", got, f.Vacuum.BasePressure.SI)
	}
	// With a large line, the pressure tends to p_base + Q/S (Q = S·p).
	big := *f
	big.Vacuum.LineDiameter = MustParse("1 m", Length)
	big.Tube.InnerDiameter = MustParse("1 m", Length)
	n2, _ := gas.Lookup("N2")
	Q := 0.05 // Pa·m³/s
	got := big.PumpLimitedPressure(Q, []gas.Gas{n2}, []float64{1})
	want := f.Vacuum.BasePressure.SI + Q/f.Vacuum.PumpSpeed.SI
	if math.Abs(got-want)/want > 0.01 {
		t.Errorf("wide lines: pressure %g Pa, want Q/S + base = %g (Q = S·p)", got, want)
	}
	// Throughput balance: Q through each segment equals the pump's S·p.
	p := f.PumpLimitedPressure(Q, []gas.Gas{n2}, []float64{1})
	if p <= want {
		t.Errorf("real lines must add a pressure drop: %g Pa ≤ %g", p, want)
	}
}

func TestReynoldsWorkedExample(t *testing.T) {
	// Hand calculation from published property values: 1 slm of N2 at
	// 25 °C and 101325 Pa in a 22 mm tube. Actual volume flow
	// Q = ṅRT/p = 1000·4.461503e-5/60 mol/s · 8.314462618 · 298.15 / 101325
	// = 1.8193e-5 m³/s; v = Q/(π d²/4) = 0.047860 m/s; ρ = pM/(RT) =
	// 1.14505 kg/m³ (M = 28.0134 g/mol, IUPAC); η(N2, 298 K) = 17.8 µPa·s
	// (handbook value, from memory) gives Re = ρ v d / η = 67.7.
	r := &Recipe{Name: "t", Substrate: Substrate{Thickness: MustParse("25 um", Length)},
		Steps: []Step{{Kind: KindPurge, Duration: MustParse("1 min", Duration), Flows: Flows{{Gas: "N2", Flow: MustParse("1 slm", Flow)}},
			Pressure: PressureSetting{Setpoint: MustParse("1 atm", Pressure)}}}}
	f := loadTestFurnace(t)
	p := Derive(r, f)
	s := p.Steps[0]
	if math.Abs(s.VolumetricFlow-1.8193e-5)/1.8193e-5 > 1e-3 {
		t.Errorf("actual flow %g m³/s, want 1.8193e-5 (ideal gas)", s.VolumetricFlow)
	}
	if math.Abs(s.Velocity-0.047860)/0.047860 > 1e-3 {
		t.Errorf("velocity %g m/s, want 0.047860", s.Velocity)
	}
	if math.Abs(s.Reynolds-67.7)/67.7 > 0.03 {
		t.Errorf("Reynolds %g, want 67.7 ± 3 %% (viscosity tolerance)", s.Reynolds)
	}
	// Residence time in the 300 mm heated zone: L/v.
	if math.Abs(s.Residence-0.3/s.Velocity) > 1e-9 {
		t.Errorf("residence %g s, want L/v = %g", s.Residence, 0.3/s.Velocity)
	}
	// Knudsen number at 1 atm is tiny: λ(N2, 1 atm, 25 °C) ≈ 65 nm (from memory).
	if kn := s.Knudsen * 0.022; kn < 50e-9 || kn > 80e-9 {
		t.Errorf("mean free path %g m, want about 65 nm", kn)
	}
}

// TestCycleTimeByHand: one pump-and-backfill cycle of the template tube
// (22 mm × 1000 mm, V = π/4·d²·l = 3.80133e-4 m³) from 1 atm to 10 Pa and
// back at 1 slm Ar. With a 0.01 m³/h pump (S = 2.77778e-6 m³/s, far below
// the tube's and line's conductances, so S_eff ≈ S within 0.3 %) the
// pump-down takes (V/S)·ln(101325/10) = 1262.2 s (vacuum handbooks,
// t = (V/S)·ln(p0/p)); the refill n = Δp·V/(R·T) = 0.0158010 mol at
// 7.435839e-4 mol/s (1 slm, SEMI 0 °C reference) takes 21.250 s. Hand
// calculation; tolerance 1 %.
func TestCycleTimeByHand(t *testing.T) {
	f := loadTestFurnace(t)
	f.Vacuum.PumpSpeed = MustParse("0.01 m3/h", VolumeRate)
	const want = 1262.2 + 21.250
	got := f.CycleTime(101325, 10, MustParse("1 slm", Flow).SI)
	if math.Abs(got-want)/want > 0.01 {
		t.Errorf("cycle time = %.1f s, want %.1f s (pump-down + refill by hand), tol 1 %%", got, want)
	}
	// Refill alone, no pump-down (low = high gives none of either).
	if got := f.CycleTime(101325, 101325, 1e-3); got != 0 {
		t.Errorf("cycle between equal pressures takes %g s, want 0", got)
	}
	// Default low pressure: the no-flow pump limit (base 5 mTorr =
	// 0.666612 Pa, the template's) plus 5 %: 0.699942 Pa.
	if got := f.CycleLowDefault(); math.Abs(got-0.699942) > 1e-5 {
		t.Errorf("default cycle low = %.6f Pa, want 0.699942 Pa (1.05 × base pressure)", got)
	}
}
