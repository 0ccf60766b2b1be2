package gas

import (
	"math"
	"testing"
)

func TestCopperVapourPressure(t *testing.T) {
	// Sources: CRC Handbook vapour-pressure table (from memory):
	// 1 Pa at about 1509 K, 10 Pa at about 1661 K; about 0.06–0.07 Pa at the
	// melting point (data sets differ by 20 %). Tolerance ±25 %.
	// Computed: 0.0582 Pa at 1357.77 K, 0.978 Pa at 1509 K, 9.87 Pa at 1661 K
	// (without the fusion term the solid equation gives 1.10 and 12.2 Pa).
	tests := []struct {
		name    string
		T, want float64
	}{
		{"melting point", CopperMeltingPoint, 0.065},
		{"1 Pa", 1509, 1},
		{"10 Pa", 1661, 10},
	}
	for _, tt := range tests {
		if got := CopperVapourPressure(tt.T); !closeRel(got, tt.want, 0.25) {
			t.Errorf("%s: got %.4g Pa at %g K, want %g ±25 %%", tt.name, got, tt.T, tt.want)
		}
	}
	// Continuous at the melting point (the fusion term is zero there).
	lo, hi := CopperVapourPressure(CopperMeltingPoint-1e-9), CopperVapourPressure(CopperMeltingPoint+1e-9)
	if !closeRel(lo, hi, 1e-9) {
		t.Errorf("jump at the melting point: %g vs %g Pa", lo, hi)
	}
	if got := CopperVapourPressure(0); got != 0 {
		t.Errorf("T = 0: got %g, want 0", got)
	}
}

func TestHertzKnudsenFlux(t *testing.T) {
	// Hand calculation of the molecular form φ = Δp/(2π·m·k_B·T)^(1/2)
	// (Kolasinski, Surface Science), divided by N_A, for Cu at 1323.15 K with
	// psat = 0.027 Pa: m = M/N_A. Tolerance 1e-10 (R = 8.314462618 is
	// k_B·N_A rounded to ten digits).
	T, psat := 1323.15, 0.027
	m := CopperMolarMass / Avogadro
	want := psat / math.Sqrt(2*math.Pi*m*Boltzmann*T) / Avogadro
	if got := HertzKnudsenFlux(psat, 0, T, CopperMolarMass); !closeRel(got, want, 1e-10) {
		t.Errorf("got %g mol/(m² s), want %g", got, want)
	}
	if got := HertzKnudsenFlux(psat, 2*psat, T, CopperMolarMass); got != 0 {
		t.Errorf("gas above psat: got %g, want 0 (no net evaporation)", got)
	}
}

func TestCopperRecessionRate(t *testing.T) {
	// Hertz–Knudsen (Kolasinski, Surface Science, 3rd ed.) order of magnitude, from memory: in vacuum a copper foil near 1050 °C can lose on the
	// order of 10 µm per hour per free face. Computed 10.4 µm/h; tolerance
	// a factor of 2 ("on the order of").
	got := CopperRecessionRate(1050+ZeroCelsius) * 3600 * 1e6 // µm/h
	if got < 5 || got > 20 {
		t.Errorf("at 1050 °C: got %.3g µm/h, want about 10", got)
	}
}
