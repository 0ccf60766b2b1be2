package gas

import (
	"math"
	"strings"
	"testing"
)

// closeRel reports whether got is within rel (relative) of want.
func closeRel(got, want, rel float64) bool {
	return math.Abs(got-want) <= rel*math.Abs(want)
}

func mustLookup(t testing.TB, name string) Gas {
	t.Helper()
	g, err := Lookup(name)
	if err != nil {
		t.Fatalf("Lookup(%q): %v", name, err)
	}
	return g
}

func TestConstants(t *testing.T) {
	// Source: derived from sccm at 0 °C and
	// 101 325 Pa (SEMI convention): 1 sccm = 7.435839e-7 mol/s = 4.461503e-5 mol/min.
	tests := []struct {
		name      string
		got, want float64
		rel       float64
	}{
		{"mol/s per sccm", MolPerSCCMPerSecond, 7.435839e-7, 1e-6},
		{"mol/min per sccm", MolPerSCCMPerSecond * 60, 4.461503e-5, 1e-6},
		// Pa·m³/s per sccm at 273.15 K: 1.68875e-3 (derived from the SEMI convention).
		{"Pa m3/s per sccm", StandardAtmosphere * 1e-6 / 60, 1.68875e-3, 1e-5},
		// ITS-90 copper point 1084.62 °C.
		{"copper point in C", CopperMeltingPoint - ZeroCelsius, 1084.62, 1e-9},
		// k_B·N_A = R (exact SI 2019 definitions).
		{"kB NA = R", Boltzmann * Avogadro, R, 1e-9},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			if !closeRel(tt.got, tt.want, tt.rel) {
				t.Errorf("got %.9g, want %.9g (rel tol %g)", tt.got, tt.want, tt.rel)
			}
		})
	}
	// Cu density 8.96 g/cm³ at 20 °C, ±0.5 % (handbook values; other sources give 8.89–8.94).
	if !closeRel(CopperDensity, 8960, 0.005) {
		t.Errorf("CopperDensity = %g, want 8960 ±0.5 %%", CopperDensity)
	}
}

func TestLookup(t *testing.T) {
	tests := []struct {
		in, want string
	}{
		{"CH4", "CH4"}, {"methane", "CH4"}, {"h2", "H2"}, {"Argon", "Ar"},
		{"  N2 ", "N2"}, {"HELIUM", "He"}, {"ethene", "C2H4"}, {"Ethylene", "C2H4"},
		{"acetylene", "C2H2"}, {"ethyne", "C2H2"}, {"o2", "O2"}, {"Air", "air"},
		{"dry air", "air"},
	}
	for _, tt := range tests {
		t.Run(tt.in, func(t *testing.T) {
			g, err := Lookup(tt.in)
			if err != nil {
				t.Fatalf("Lookup(%q): %v", tt.in, err)
			}
			if g.Symbol != tt.want {
				t.Errorf("Lookup(%q).Symbol = %q, want %q", tt.in, g.Symbol, tt.want)
			}
		})
	}
}

func TestLookupUnknown(t *testing.T) {
	tests := []struct {
		in, suggestion string // suggestion "" means none expected
	}{
		{"metane", `did you mean "CH4"?`},
		{"argn", `did you mean "Ar"?`},
		{"hydrogne", `did you mean "H2"?`},
		{"H3", `did you mean "H2"?`},
		{"xenon", ""},
		{"", ""},
	}
	for _, tt := range tests {
		t.Run(tt.in, func(t *testing.T) {
			_, err := Lookup(tt.in)
			if err == nil {
				t.Fatalf("Lookup(%q) = nil error, want unknown gas", tt.in)
			}
			msg := err.Error()
			if !strings.HasPrefix(msg, "unknown gas ") || !strings.Contains(msg, "CH4 (methane)") {
				t.Errorf("got %q, want unknown-gas error listing known gases", msg)
			}
			if tt.suggestion == "" && strings.Contains(msg, "did you mean") {
				t.Errorf("got %q, want no suggestion", msg)
			}
			if tt.suggestion != "" && !strings.Contains(msg, tt.suggestion) {
				t.Errorf("got %q, want it to contain %q", msg, tt.suggestion)
			}
		})
	}
}

func TestKnownStableAndIndependent(t *testing.T) {
	want := []string{"H2", "CH4", "Ar", "N2", "He", "C2H4", "C2H2", "O2", "air"}
	a := Known()
	if len(a) != len(want) {
		t.Fatalf("len(Known()) = %d, want %d", len(a), len(want))
	}
	for i, g := range a {
		if g.Symbol != want[i] {
			t.Errorf("Known()[%d] = %q, want %q", i, g.Symbol, want[i])
		}
	}
	a[5].Aliases[0] = "changed"
	b := mustLookup(t, "C2H2")
	b.Aliases[0] = "changed"
	if g := mustLookup(t, "ethyne"); g.Symbol != "C2H2" {
		t.Errorf("mutating a Lookup result changed the table: ethyne -> %q", g.Symbol)
	}
	a[0].LFL.V = 1
	if g := mustLookup(t, "ethene"); g.Symbol != "C2H4" {
		t.Errorf("mutating Known() changed the table: ethene -> %q", g.Symbol)
	}
	if g := mustLookup(t, "H2"); g.LFL.V != 0.04 {
		t.Errorf("mutating Known() changed H2 LFL to %g", g.LFL.V)
	}
}

func TestMolarMass(t *testing.T) {
	// Source: IUPAC 1995 standard atomic weights; NASA Glenn thermo data
	// (read). C2H4, C2H2 and O2: sums of IUPAC atomic weights
	// C 12.0107, H 1.00794, O 15.9994 (from memory). Air: NASA Glenn dry air
	// 28.9651 g/mol (from memory). Tolerance 1e-6 relative.
	tests := []struct {
		gas  string
		want float64 // g/mol
	}{
		{"H2", 2.01588}, {"CH4", 16.04246}, {"Ar", 39.948}, {"N2", 28.0134},
		{"He", 4.002602},
		{"C2H4", 2*12.0107 + 4*1.00794}, {"C2H2", 2*12.0107 + 2*1.00794},
		{"O2", 2 * 15.9994}, {"air", 28.9651},
	}
	for _, tt := range tests {
		t.Run(tt.gas, func(t *testing.T) {
			g := mustLookup(t, tt.gas)
			if got := g.MolarMass.V * 1e3; !closeRel(got, tt.want, 1e-6) {
				t.Errorf("molar mass got %.7g g/mol, want %.7g", got, tt.want)
			}
			if g.MolarMass.Source == "" {
				t.Errorf("molar mass has no source")
			}
		})
	}
}

func TestFlammability(t *testing.T) {
	// Source: NFPA 497 (2008) and
	// IEC 60079-20-1 (2010), read in the "chemicals" library data files.
	// Percent by volume in air and °C; tolerance 1e-9.
	tests := []struct {
		gas           string
		c             Compilation
		lfl, ufl, ait float64
	}{
		{"H2", NFPA497, 4.0, 75, 500},
		{"H2", IEC60079, 4.0, 77, 560},
		{"CH4", NFPA497, 5.0, 15, 600},
		{"CH4", IEC60079, 4.4, 17, 600},
		{"C2H4", NFPA497, 2.7, 36, 490},
		{"C2H4", IEC60079, 2.3, 36, 440},
		{"C2H2", NFPA497, 2.5, 100, 305},
		{"C2H2", IEC60079, 2.3, 100, 305},
		{"Ar", NFPA497, 0, 0, -ZeroCelsius},
		{"N2", IEC60079, 0, 0, -ZeroCelsius},
	}
	for _, tt := range tests {
		t.Run(tt.gas+" "+tt.c.String(), func(t *testing.T) {
			g := mustLookup(t, tt.gas)
			lfl, ufl, ait := g.Limits(tt.c)
			if math.Abs(lfl.V-tt.lfl/100) > 1e-9 || math.Abs(ufl.V-tt.ufl/100) > 1e-9 {
				t.Errorf("limits got %g..%g, want %g..%g", lfl.V, ufl.V, tt.lfl/100, tt.ufl/100)
			}
			wantAIT := 0.0
			if tt.lfl > 0 {
				wantAIT = tt.ait + ZeroCelsius
				if string(lfl.Source) != tt.c.String() || string(ait.Source) != tt.c.String() {
					t.Errorf("sources %q, %q, want %q", lfl.Source, ait.Source, tt.c.String())
				}
				if !g.Flammable {
					t.Errorf("Flammable = false, want true")
				}
			}
			if math.Abs(ait.V-wantAIT) > 1e-9 {
				t.Errorf("autoignition got %g K, want %g K", ait.V, wantAIT)
			}
			if tt.c == DefaultCompilation && (g.LFL != lfl || g.UFL != ufl || g.AutoIgnition != ait) {
				t.Errorf("default fields %v %v %v differ from Limits(default) %v %v %v", g.LFL, g.UFL, g.AutoIgnition, lfl, ufl, ait)
			}
		})
	}
}

func TestRoles(t *testing.T) {
	// Common practice: H2 is a flammable non-carbon gas, hydrocarbons are the
	// carbon feed, noble gases and N2 are inert; acetylene decomposes.
	tests := []struct {
		gas    string
		role   Role
		carbon int
	}{
		{"H2", Fuel, 0}, {"CH4", CarbonSource, 1}, {"C2H4", CarbonSource, 2},
		{"C2H2", CarbonSource, 2}, {"Ar", Inert, 0}, {"N2", Inert, 0},
		{"He", Inert, 0}, {"O2", Oxidiser, 0}, {"air", Oxidiser, 0},
	}
	for _, tt := range tests {
		g := mustLookup(t, tt.gas)
		if g.Role != tt.role || g.CarbonAtoms != tt.carbon {
			t.Errorf("%s: got role %v, %d C, want %v, %d C", tt.gas, g.Role, g.CarbonAtoms, tt.role, tt.carbon)
		}
	}
	if !mustLookup(t, "C2H2").Decomposes {
		t.Errorf("C2H2 Decomposes = false, want true (NFPA 497 (2008): decomposes without air)")
	}
	// NASA Glenn air composition 20.9476 % O2 (McBride, Zehe & Gordon, NASA/TP-2002-211556).
	if got := mustLookup(t, "air").OxygenFraction; got != 0.209476 {
		t.Errorf("air O2 fraction got %g, want 0.209476", got)
	}
}

func TestEditDistance(t *testing.T) {
	// Hand-counted Levenshtein distances (textbook examples).
	tests := []struct {
		a, b string
		want int
	}{
		{"kitten", "sitting", 3}, {"", "abc", 3}, {"abc", "abc", 0},
		{"flaw", "lawn", 2}, {"méthane", "methane", 1},
	}
	for _, tt := range tests {
		if got := EditDistance(tt.a, tt.b); got != tt.want {
			t.Errorf("EditDistance(%q, %q) got %d, want %d", tt.a, tt.b, got, tt.want)
		}
	}
}

func FuzzLookup(f *testing.F) {
	for _, s := range []string{"CH4", "methane", "metane", "", " ", "h2", "\xff", strings.Repeat("a", 200)} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		g, err := Lookup(s)
		if err == nil {
			// Round trip: the symbol and name of a found gas find it again.
			for _, n := range []string{g.Symbol, g.Name} {
				h, err := Lookup(n)
				if err != nil || h.Symbol != g.Symbol {
					t.Fatalf("Lookup(%q) = %q, %v; want %q", n, h.Symbol, err, g.Symbol)
				}
			}
			return
		}
		if !strings.HasPrefix(err.Error(), "unknown gas ") {
			t.Fatalf("error %q lacks the unknown-gas prefix", err)
		}
	})
}
