package gas

import (
	"fmt"
	"strings"
)

// Role says what a gas does in a CVD recipe, for the safety and sequence checks.
type Role int

const (
	// Inert gases (Ar, N2, He) neither burn nor feed carbon.
	Inert Role = iota
	// Fuel gases are flammable in air but carry no carbon (H2).
	Fuel
	// CarbonSource gases are flammable and feed carbon for growth (CH4, C2H4, C2H2).
	CarbonSource
	// Oxidiser gases support combustion (O2, air).
	Oxidiser
)

// String returns the role's plain-English name.
func (r Role) String() string {
	switch r {
	case Inert:
		return "inert"
	case Fuel:
		return "fuel"
	case CarbonSource:
		return "carbon source"
	case Oxidiser:
		return "oxidiser"
	}
	return fmt.Sprintf("Role(%d)", int(r))
}

// Source names where a number came from, e.g. "NFPA 497 (2008)". A value
// recalled but not checked against its source says "from memory".
type Source string

// Value is a number together with its source.
type Value struct {
	// V is the number, in SI units (or a fraction 0..1).
	V float64
	// Source is where V came from.
	Source Source
}

// String formats the value with its source, e.g. "0.04 (NFPA 497 (2008))".
func (v Value) String() string {
	if v.Source == "" {
		return fmt.Sprintf("%g", v.V)
	}
	return fmt.Sprintf("%g (%s)", v.V, v.Source)
}

// Gas is one entry of the gas table. All numbers are SI; fractions are 0..1.
// A Gas is a plain value: copies are independent.
type Gas struct {
	// Symbol is the chemical formula used in files, e.g. "H2"; "air" for air.
	Symbol string
	// Name is the plain-English name, e.g. "hydrogen".
	Name string
	// Aliases are further accepted names, e.g. "ethene" for ethylene.
	Aliases []string
	// Role says whether the gas is inert, a fuel, a carbon source or an oxidiser.
	Role Role
	// MolarMass in kg/mol.
	MolarMass Value
	// MFCFactor is the tabulated thermal-MFC gas correction factor relative to
	// N2 (N2 = 1): the flow of this gas is the N2-calibrated reading times the
	// factor. Makers' tables differ by a few per cent.
	MFCFactor Value
	// StandardDensity is the density in kg/m³ at 0 °C and 101 325 Pa (numerically
	// g/L), as used by the MFC correction-factor formula (see MixtureMFCFactor).
	StandardDensity Value
	// SpecificHeat is the specific heat capacity c_p in J/(kg·K) near 0 °C as
	// used by the MFC correction-factor formula.
	SpecificHeat Value
	// StructureFactor is the molecular-structure factor s of the MFC formula:
	// 1.030 monatomic, 1.000 diatomic, 0.941 triatomic, 0.880 four or more atoms.
	StructureFactor float64
	// LFL and UFL are the lower and upper flammable limits in air, as volume
	// (mole) fractions, from the default compilation (NFPA 497); 0 if the gas
	// is not flammable. Use Limits for another compilation.
	LFL, UFL Value
	// AutoIgnition is the autoignition temperature in K from the default
	// compilation; 0 if the gas is not flammable.
	AutoIgnition Value
	// CarbonAtoms is the number of carbon atoms per molecule.
	CarbonAtoms int
	// Flammable is true for gases that burn in air.
	Flammable bool
	// OxygenFraction is the mole fraction of O2 the gas carries (1 for O2,
	// OxygenInAir for air, 0 otherwise), for oxygen-depletion arithmetic.
	OxygenFraction float64
	// Decomposes is true for gases that can decompose explosively without air
	// (acetylene): above the UFL is still not safe.
	Decomposes bool
	// ViscosityData is the viscosity model with its handbook points; see
	// Gas.Viscosity.
	ViscosityData ViscosityData

	// limits holds each compilation's flammability data, indexed by Compilation.
	limits [compilationCount]FlammabilityLimits
}

// Lookup finds a gas by symbol, name or alias, ignoring case and surrounding
// space ("CH4", "methane", "h2", "Argon"). An unknown name returns an error
// that lists the known gases and, when a known name is close, suggests it.
func Lookup(name string) (Gas, error) {
	for _, g := range table { // fast path: the canonical symbol as written
		if g.Symbol == name {
			return g.clone(), nil
		}
	}
	key := strings.ToLower(strings.TrimSpace(name))
	for _, g := range table {
		for _, n := range g.names() {
			if strings.EqualFold(n, key) {
				return g.clone(), nil
			}
		}
	}
	var b strings.Builder
	fmt.Fprintf(&b, "unknown gas %q", name)
	if s, ok := suggest(key); ok {
		fmt.Fprintf(&b, ": did you mean %q?", s)
	}
	b.WriteString("; known gases: ")
	for i, g := range table {
		if i > 0 {
			b.WriteString(", ")
		}
		fmt.Fprintf(&b, "%s (%s)", g.Symbol, g.Name)
	}
	return Gas{}, fmt.Errorf("%s", b.String())
}

// Known returns every gas in the table, in a stable order (the order of the
// table: H2, CH4, Ar, N2, He, C2H4, C2H2, O2, air). The slice is a fresh copy.
func Known() []Gas {
	out := make([]Gas, len(table))
	for i, g := range table {
		out[i] = g.clone()
	}
	return out
}

// clone returns a copy of g that shares no memory with it.
func (g Gas) clone() Gas {
	g.Aliases = append([]string(nil), g.Aliases...)
	return g
}

// names returns every accepted name of g.
func (g Gas) names() []string {
	return append([]string{g.Symbol, g.Name}, g.Aliases...)
}

// suggest returns the symbol of the gas whose closest name is within a small
// edit distance of key.
func suggest(key string) (string, bool) {
	if key == "" || len(key) > 64 {
		return "", false
	}
	best, bestD := "", -1
	for _, g := range table {
		for _, n := range g.names() {
			d := EditDistance(key, strings.ToLower(n))
			if bestD < 0 || d < bestD {
				best, bestD = g.Symbol, d
			}
		}
	}
	limit := 2
	if len([]rune(key)) <= 3 {
		limit = 1
	}
	if bestD < 0 || bestD > limit {
		return "", false
	}
	return best, true
}

// EditDistance is the Levenshtein distance between a and b, counted in
// runes; the loaders use it to suggest a close name for a typo.
func EditDistance(a, b string) int {
	ra, rb := []rune(a), []rune(b)
	prev := make([]int, len(rb)+1)
	cur := make([]int, len(rb)+1)
	for j := range prev {
		prev[j] = j
	}
	for i := 1; i <= len(ra); i++ {
		cur[0] = i
		for j := 1; j <= len(rb); j++ {
			cost := 1
			if ra[i-1] == rb[j-1] {
				cost = 0
			}
			cur[j] = min(prev[j]+1, cur[j-1]+1, prev[j-1]+cost)
		}
		prev, cur = cur, prev
	}
	return prev[len(rb)]
}
