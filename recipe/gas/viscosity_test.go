package gas

import (
	"math"
	"testing"
)

func TestViscosityAtHandbookPoints(t *testing.T) {
	// Values at 300 K from the task brief's handbook list (from memory):
	// H2 8.9, CH4 11.1, Ar 22.7, N2 17.9, He 19.9 µPa·s. The Sutherland fit
	// passes through its two points, so these agree to rounding; tolerance 0.1 %.
	tests := []struct {
		gas  string
		want float64 // µPa·s at 300 K
	}{
		{"H2", 8.9}, {"CH4", 11.1}, {"Ar", 22.7}, {"N2", 17.9}, {"He", 19.9},
	}
	for _, tt := range tests {
		g := mustLookup(t, tt.gas)
		if got := g.Viscosity(300) * 1e6; !closeRel(got, tt.want, 1e-3) {
			t.Errorf("%s: got %.4g µPa·s at 300 K, want %.4g", tt.gas, got, tt.want)
		}
		d := g.ViscosityData
		if got := g.Viscosity(d.High.T); !closeRel(got, d.High.Mu.V, 1e-9) {
			t.Errorf("%s: fit misses its second point: got %g, want %g", tt.gas, got, d.High.Mu.V)
		}
	}
}

func TestViscosityAgainstWhiteSutherland(t *testing.T) {
	// Source: Sutherland constants of F. M. White, Viscous Fluid Flow, 2nd ed.
	// (1991), Table 1-2 (from memory), T0 = 273 K: η0 (Pa·s) and S (K).
	// White quotes a few per cent for these fits; our two-point handbook fit
	// is an independent data set. Allow 4 % to 600 K and 7 % above, where the
	// data sets spread: Ar differs most (+5.6 % at 1000 K, +6.5 % at 1300 K,
	// while the Chapman–Enskog estimate below lies between the two).
	white := []struct {
		gas    string
		mu0, s float64
	}{
		{"air", 1.716e-5, 111}, {"Ar", 2.125e-5, 114}, {"N2", 1.663e-5, 107},
		{"O2", 1.919e-5, 139}, {"H2", 8.411e-6, 97},
	}
	for _, w := range white {
		g := mustLookup(t, w.gas)
		for _, T := range []float64{300, 600, 1000, 1300} {
			want := w.mu0 * math.Pow(T/273, 1.5) * (273 + w.s) / (T + w.s)
			tol := 0.04
			if T > 600 {
				tol = 0.07
			}
			if got := g.Viscosity(T); !closeRel(got, want, tol) {
				t.Errorf("%s at %g K: got %.4g Pa·s, want %.4g ±%g", w.gas, T, got, want, tol)
			}
		}
	}
}

// chapmanEnskog returns the first Chapman–Enskog viscosity in Pa·s for
// Lennard-Jones molecules (Bird, Stewart & Lightfoot, Transport Phenomena,
// 2nd ed., eq. 1.4-14), with the collision integral of Neufeld, Janzen & Aziz,
// J. Chem. Phys. 57, 1100 (1972): M in g/mol, sigma in Å, eps in K.
func chapmanEnskog(M, sigma, eps, T float64) float64 {
	ts := T / eps
	omega := 1.16145*math.Pow(ts, -0.14874) + 0.52487*math.Exp(-0.77320*ts) + 2.16178*math.Exp(-2.43787*ts)
	return 2.6693e-6 * math.Sqrt(M*T) / (sigma * sigma * omega) // g/(cm s) * 0.1
}

func TestViscosityAgainstChapmanEnskog(t *testing.T) {
	// Source: Lennard-Jones parameters of Bird, Stewart & Lightfoot, Transport
	// Phenomena, 2nd ed. (2002), Table E.1 (from memory): σ in Å, ε/k in K.
	// The kinetic theory is good to a few per cent for these gases: tolerance
	// 5 % to 600 K and 7 % above (largest seen: C2H2 +6.6 % at 1300 K, whose
	// 600 K handbook value is the least certain in the table).
	lj := []struct {
		gas        string
		sigma, eps float64
	}{
		{"H2", 2.915, 38.0}, {"CH4", 3.780, 154}, {"Ar", 3.432, 122.4},
		{"N2", 3.667, 99.8}, {"He", 2.576, 10.2}, {"C2H4", 4.232, 205},
		{"C2H2", 4.221, 185}, {"O2", 3.433, 113}, {"air", 3.617, 97.0},
	}
	for _, p := range lj {
		g := mustLookup(t, p.gas)
		for _, T := range []float64{300, 600, 1000, 1300} {
			want := chapmanEnskog(g.MolarMass.V*1e3, p.sigma, p.eps, T)
			tol := 0.05
			if T > 600 {
				tol = 0.07
			}
			if got := g.Viscosity(T); !closeRel(got, want, tol) {
				t.Errorf("%s at %g K: got %.4g Pa·s, want %.4g ±%g", p.gas, T, got, want, tol)
			}
		}
	}
}

func TestWilkeBirdStewartLightfoot(t *testing.T) {
	// Source: Bird, Stewart & Lightfoot, Transport Phenomena, 2nd ed. (2002),
	// Example 1.4-2 (from memory): CO2/O2/N2 at 293 K and 1 atm with
	// x = 0.133/0.039/0.828, M = 44.01/32.00/28.02 g/mol and
	// η = 1462/2031/1754 × 1e-7 g/(cm·s); Wilke's rule gives 1714e-7 g/(cm·s)
	// (the book rounds; hand calculation gives 1714.3). Tolerance 0.05 %.
	mu := []float64{1462, 2031, 1754}
	m := []float64{44.01, 32.00, 28.02}
	x := []float64{0.133, 0.039, 0.828}
	if got := WilkeViscosity(mu, m, x); !closeRel(got, 1714, 5e-4) {
		t.Errorf("got %.5g, want 1714 ±0.05 %%", got)
	}
	// Scaling the fractions must not change the result (Wilke's rule is
	// homogeneous of degree zero in x; property of the formula).
	x2 := []float64{1.33, 0.39, 8.28}
	if a, b := WilkeViscosity(mu, m, x), WilkeViscosity(mu, m, x2); !closeRel(a, b, 1e-12) {
		t.Errorf("scaled fractions: got %g, want %g", b, a)
	}
}

func TestMixtureViscosityLimits(t *testing.T) {
	h2, ar := mustLookup(t, "H2"), mustLookup(t, "Ar")
	T := 1300.0
	// A pure gas, or a mixture with one fraction zero, is that gas
	// (Φ_ii = 1 in Wilke's rule).
	if got, want := MixtureViscosity([]Gas{h2, ar}, []float64{0, 1}, T), ar.Viscosity(T); !closeRel(got, want, 1e-12) {
		t.Errorf("pure Ar: got %g, want %g", got, want)
	}
	// Same gas listed twice equals the pure gas (Φ between identical species is 1).
	if got, want := MixtureViscosity([]Gas{h2, h2}, []float64{0.3, 0.7}, T), h2.Viscosity(T); !closeRel(got, want, 1e-12) {
		t.Errorf("H2+H2: got %g, want %g", got, want)
	}
	// A mixture lies between its components here (holds for H2/Ar; hand
	// calculation with Wilke's rule gives 1:1 H2/Ar at 1300 K ≈ 0.77 of Ar).
	mix := MixtureViscosity([]Gas{h2, ar}, []float64{0.5, 0.5}, T)
	if mix <= h2.Viscosity(T) || mix >= ar.Viscosity(T) {
		t.Errorf("H2/Ar 1:1 got %g, want between %g and %g", mix, h2.Viscosity(T), ar.Viscosity(T))
	}
}

func TestMeanFreePath(t *testing.T) {
	// Air at 296.15 K and 101 325 Pa: about 66 nm with η = 1.83e-5 Pa·s
	// (common practice: 65–68 nm quoted in aerosol texts; Jennings 1988).
	// Tolerance 3 %.
	air := mustLookup(t, "air")
	if got := MeanFreePath(1.83e-5, 296.15, StandardAtmosphere, air.MolarMass.V); !closeRel(got, 66e-9, 0.03) {
		t.Errorf("air at 1 atm: got %.4g m, want 66e-9 ±3 %%", got)
	}
	// Hand calculation from η = ½·ρ·v̄·λ (kinetic theory, Kennard 1938):
	// H2 at 1300 K and 133.3 Pa with η = 2.3e-5 Pa·s.
	T, p, M, eta := 1300.0, 133.322, 2.01588e-3, 2.3e-5
	rho := p * M / (R * T)
	vbar := math.Sqrt(8 * R * T / (math.Pi * M))
	want := 2 * eta / (rho * vbar)
	if got := MeanFreePath(eta, T, p, M); !closeRel(got, want, 1e-12) {
		t.Errorf("H2 at 1 Torr: got %g m, want %g", got, want)
	}
	// λ ∝ 1/p (kinetic theory).
	if a, b := MeanFreePath(eta, T, p, M), MeanFreePath(eta, T, 2*p, M); !closeRel(a, 2*b, 1e-12) {
		t.Errorf("doubling p: got %g, want %g", b, a/2)
	}
}

func BenchmarkMixtureViscosity(b *testing.B) {
	gs := []Gas{mustLookup(b, "H2"), mustLookup(b, "CH4"), mustLookup(b, "Ar")}
	x := []float64{0.3, 0.01, 0.69}
	for b.Loop() {
		MixtureViscosity(gs, x, 1300)
	}
}
