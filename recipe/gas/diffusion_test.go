package gas

import (
	"math"
	"testing"
)

// The Chapman–Enskog formula with Bird, Stewart & Lightfoot's Table E.1
// parameters against a measured coefficient: H2–N2 at 297.2 K and 1 atm,
// 0.779 cm²/s (Bird, Stewart & Lightfoot, Transport Phenomena, 2nd ed.,
// Table 17.1-1; from memory). Chapman–Enskog is good to about 5 % for
// such pairs; tolerance 5 %.
func TestBinaryDiffusivityMeasured(t *testing.T) {
	h2, n2 := mustLookup(t, "H2"), mustLookup(t, "N2")
	got := BinaryDiffusivity(LennardJonesOf(h2), LennardJonesOf(n2), h2.MolarMass.V, n2.MolarMass.V, 297.2, StandardAtmosphere) * 1e4
	if math.Abs(got-0.779)/0.779 > 0.05 {
		t.Errorf("D(H2–N2, 297.2 K, 1 atm) = %.4f cm²/s, want 0.779 ± 5 %% (measured)", got)
	}
}

// Neufeld's correlation against the Lennard-Jones Ω_D table: T* = 1.00
// gives 1.440, T* = 2.00 gives 1.075, T* = 10 gives 0.7424 (Bird, Stewart
// & Lightfoot, Table E.2; from memory). Tolerance 0.3 %.
func TestDiffusionCollisionIntegral(t *testing.T) {
	for _, c := range []struct{ tStar, want float64 }{{1, 1.440}, {2, 1.075}, {10, 0.7424}} {
		if got := DiffusionCollisionIntegral(c.tStar); math.Abs(got-c.want)/c.want > 0.003 {
			t.Errorf("Ω_D(T* = %g) = %.4f, want %.4f (table), tol 0.3 %%", c.tStar, got, c.want)
		}
	}
}

// TestCopperDiffusionByHand: copper at 1040 °C (1313.15 K) in argon, film
// of δ = 11 mm (the template tube's radius). Hand calculation from the
// stated formulas (arithmetic checked in python3):
//
//	T* = 1313.15/√(3260·122.4) = 2.0788, Ω_D = 1.06119 (Neufeld);
//	σ_AB = (2.556 + 3.432)/2 = 2.994 Å;
//	D(1 atm) = 0.0018583·√(1313.15³·(1/63.546 + 1/39.948))/(2.994²·1.06119)
//	         = 1.87698 cm²/s; D(5 Torr) = 1.87698·760/5 = 285.30 cm²/s;
//	p_sat = 0.0214513 Pa (Alcock et al.), c_sat = p_sat/(R·T) = 1.96474e-6 mol/m³;
//	rate = D·c_sat/δ·M/ρ: 1 atm 2.37767e-13 m/s = 8.5596e-4 µm/h,
//	5 Torr 3.61406e-11 m/s = 0.130106 µm/h; vacuum (Hertz–Knudsen) 8.2952 µm/h.
//
// Tolerance 1e-4 (the hand arithmetic's digits).
func TestCopperDiffusionByHand(t *testing.T) {
	ar := mustLookup(t, "Ar")
	const T, delta = 1313.15, 0.011
	cases := []struct {
		name   string
		p      float64
		umPerH float64
	}{
		{"1 atm", StandardAtmosphere, 8.5596e-4},
		{"5 Torr", 5 * 133.322368, 0.130106},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			got := CopperDiffusionRecessionRate([]Gas{ar}, []float64{1}, T, c.p, delta) * 3600e6
			if math.Abs(got-c.umPerH)/c.umPerH > 1e-4 {
				t.Errorf("diffusion-limited loss = %.6g µm/h, want %.6g (hand), tol 1e-4", got, c.umPerH)
			}
			if vac := CopperRecessionRate(T) * 3600e6; got >= vac {
				t.Errorf("diffusion estimate %.3g µm/h is not below the vacuum bound %.3g µm/h", got, vac)
			}
		})
	}
	// Blanc's law: 25 sccm H2 in 500 sccm Ar (x_H2 = 0.047619); D(Cu–H2)
	// = 9.39921 cm²/s by the same formula; 1/D = x/D_H2 + (1−x)/D_Ar gives
	// 1.95134 cm²/s at 1 atm.
	h2 := mustLookup(t, "H2")
	x := 25.0 / 525
	got := CopperDiffusivity([]Gas{h2, ar}, []float64{x, 1 - x}, T, StandardAtmosphere) * 1e4
	if math.Abs(got-1.95134)/1.95134 > 1e-4 {
		t.Errorf("D(Cu in Ar/H2) = %.6g cm²/s, want 1.95134 (Blanc, hand), tol 1e-4", got)
	}
}
