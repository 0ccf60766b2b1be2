package gas

import (
	"math"
	"testing"
)

func TestMethaneGibbsFormationJANAF(t *testing.T) {
	// Source: NIST-JANAF Thermochemical Tables, 4th ed. (1998), CH4 ΔfG°.
	// 1000, 1200, 1400 K (from memory, reproduced by a
	// Shomate calculation); the others from memory. Tolerance 0.3 kJ/mol:
	// JANAF and the NASA Glenn graphite data differ by up to 0.5 kJ/mol; we
	// agree to about 0.01 kJ/mol.
	tests := []struct {
		T    float64
		want float64 // kJ/mol
	}{
		{298.15, -50.768}, {500, -32.741}, {800, -2.115}, {1000, 19.492},
		{1200, 41.524}, {1400, 63.761}, {1500, 74.918},
	}
	for _, tt := range tests {
		got := MethaneGibbsFormation(tt.T) / 1000
		if math.Abs(got-tt.want) > 0.3 {
			t.Errorf("ΔfG°(CH4, %g K): got %.3f kJ/mol, want %.3f ±0.3", tt.T, got, tt.want)
		}
	}
}

func TestGraphiteNASA(t *testing.T) {
	// Source: NIST-JANAF graphite (from memory): S°(298.15) = 5.740 J/(mol·K),
	// H°(1000) − H°(298.15) = 11.795 kJ/mol, Cp(1000) = 21.610 J/(mol·K).
	// Tolerances 0.01 J/(mol·K), 0.01 kJ/mol.
	h298, s298 := nasaHS(graphiteNASA, 298.15)
	if math.Abs(h298) > 1 || math.Abs(s298-5.740) > 0.01 {
		t.Errorf("graphite at 298.15 K: got H %g J/mol, S %g J/(mol K), want 0, 5.740", h298, s298)
	}
	h1000, _ := nasaHS(graphiteNASA, 1000)
	if math.Abs(h1000/1000-11.795) > 0.01 {
		t.Errorf("graphite H(1000)-H(298): got %.4f kJ/mol, want 11.795", h1000/1000)
	}
	// The polynomial segments must join: H and S continuous at 600 and 2000 K
	// (a property of the NASA fits; a mistyped coefficient breaks it).
	for _, T := range []float64{600, 2000} {
		hl, sl := nasaHS(graphiteNASA, T*(1-1e-12))
		hh, sh := nasaHS(graphiteNASA, T*(1+1e-12))
		if math.Abs(hl-hh) > 0.01 || math.Abs(sl-sh) > 1e-4 {
			t.Errorf("graphite at %g K: H %g vs %g, S %g vs %g", T, hl, hh, sl, sh)
		}
	}
}

func TestShomateContinuity(t *testing.T) {
	// Property of the NIST fits: H and S nearly continuous where segments
	// join (CH4 at 1300 K, H2 at 1000 K). Tolerance 0.05 kJ/mol, 0.05 J/(mol K).
	for _, c := range []struct {
		name string
		segs []shomate
		T    float64
	}{{"CH4", methaneShomate, 1300}, {"H2", hydrogenShomate, 1000}} {
		hl, sl := shomateHS(c.segs, c.T*(1-1e-9))
		hh, sh := shomateHS(c.segs, c.T*(1+1e-9))
		if math.Abs(hl-hh) > 50 || math.Abs(sl-sh) > 0.05 {
			t.Errorf("%s at %g K: H %g vs %g J/mol, S %g vs %g", c.name, c.T, hl, hh, sl, sh)
		}
	}
	// H° − H°298 is zero at 298.15 K by construction of the fits.
	for _, segs := range [][]shomate{methaneShomate, hydrogenShomate} {
		if h, _ := shomateHS(segs, 298.15); math.Abs(h) > 5 {
			t.Errorf("H(298.15)-H(298.15) = %g J/mol, want 0", h)
		}
	}
}

func TestEquilibriumMethanePressure(t *testing.T) {
	const torr = StandardAtmosphere / 760
	// At 1300 K and 1 Torr H2 the equilibrium CH4 pressure is tiny: computed
	// 1.367e-3 Pa (ΔfG° = 52.618 kJ/mol, K_p = 130.1). Check against a hand
	// evaluation of p_H2²/(K_p·p°) with JANAF's 1300 K value 52.626 kJ/mol
	// (from memory); tolerance 1 % (0.008 kJ/mol moves K_p by 0.07 %).
	kp := math.Exp(52.626e3 / (R * 1300))
	want := torr * torr / (kp * StandardPressure)
	got := EquilibriumMethanePressure(1300, torr)
	if !closeRel(got, want, 0.01) {
		t.Errorf("1300 K, 1 Torr H2: got %.4g Pa, want %.4g", got, want)
	}
	if got > 1e-2 {
		t.Errorf("1300 K, 1 Torr H2: got %g Pa, want far below a typical CH4 pressure of 0.01 Pa", got)
	}
	// Below about 820 K ΔfG° < 0 (JANAF: −2.1 kJ/mol at 800 K) and methane is
	// stable: at 1 bar H2, 700 K, the equilibrium CH4 pressure exceeds p°.
	if got := EquilibriumMethanePressure(700, StandardPressure); got <= StandardPressure {
		t.Errorf("700 K, 1 bar H2: got %g Pa, want > 1e5 (methane stable)", got)
	}
	// Quadratic in pH2 (from K_p's definition).
	if a, b := EquilibriumMethanePressure(1300, torr), EquilibriumMethanePressure(1300, 2*torr); !closeRel(b, 4*a, 1e-12) {
		t.Errorf("doubling pH2: got %g, want %g", b, 4*a)
	}
}

func TestSupersaturation(t *testing.T) {
	const torr = StandardAtmosphere / 760
	eq := EquilibriumMethanePressure(1300, torr)
	tests := []struct {
		name            string
		pCH4, pH2, want float64
	}{
		{"at equilibrium", eq, torr, 1},
		{"twice equilibrium", 2 * eq, torr, 2},
		{"no methane", 0, torr, 0},
		{"no methane, no hydrogen", 0, 0, 0},
		{"no hydrogen", 1, 0, math.Inf(1)},
	}
	for _, tt := range tests {
		got := Supersaturation(1300, tt.pCH4, tt.pH2)
		if !(got == tt.want || closeRel(got, tt.want, 1e-12)) {
			t.Errorf("%s: got %g, want %g", tt.name, got, tt.want)
		}
	}
	// Typical low-pressure growth, 1300 K, 0.1 Torr CH4 in 1 Torr H2, is far
	// above equilibrium (computed ≈ 9.8e3).
	if s := Supersaturation(1300, 0.1*torr, torr); s < 1e3 {
		t.Errorf("0.1 Torr CH4 in 1 Torr H2: got %g, want ≫ 1", s)
	}
}

func TestThermoPanicsOnBadInput(t *testing.T) {
	for name, f := range map[string]func(){
		"T=0":      func() { MethaneGibbsFormation(0) },
		"T<0":      func() { MethaneGibbsFormation(-5) },
		"pH2<0":    func() { EquilibriumMethanePressure(1300, -1) },
		"pCH4<0":   func() { Supersaturation(1300, -1, 1) },
		"T NaN":    func() { MethaneGibbsFormation(math.NaN()) },
		"Wilke x":  func() { WilkeViscosity([]float64{1}, []float64{1}, []float64{-1}) },
		"len diff": func() { MixtureViscosity(Known()[:2], []float64{1}, 300) },
	} {
		t.Run(name, func(t *testing.T) {
			defer func() {
				if recover() == nil {
					t.Errorf("no panic, want one (documented misuse)")
				}
			}()
			f()
		})
	}
}

func BenchmarkMethaneGibbsFormation(b *testing.B) {
	T := 1000.0
	for b.Loop() {
		MethaneGibbsFormation(T)
		T += 1e-3
	}
}
