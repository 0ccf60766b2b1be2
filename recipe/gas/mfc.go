package gas

import (
	"fmt"
	"math"
)

// mfcNitrogenProduct is d·c_p of N2 in the units of the makers' formula,
// (g/L)·cal/(g·°C): 1.250 × 0.2485 = 0.3106.
const mfcNitrogenProduct = 0.3106

// calorie is the thermochemical calorie in J, the unit of the makers' c_p tables.
const calorie = 4.184

// FormulaMFCFactor returns the thermal-MFC gas correction factor of g relative
// to N2 computed from the makers' formula (see MixtureMFCFactor) rather than
// read from a table. For polyatomic gases the two agree to about 1 %; for the
// monatomic gases the tables carry an empirical correction (Ar: formula 1.44,
// tables 1.39–1.40), so prefer Gas.MFCFactor for a pure gas.
func FormulaMFCFactor(g Gas) float64 {
	return MixtureMFCFactor([]Gas{g}, []float64{1})
}

// MixtureMFCFactor returns the thermal-MFC gas correction factor relative to
// N2 of a mixture of gs in the proportions a (flows or fractions, any common
// unit), by the formula of thermal-MFC makers' manuals:
//
//	GCF_mix = 0.3106 · Σ a_i·s_i / Σ a_i·d_i·c_p,i
//
// with d the density at 0 °C and 101 325 Pa in g/L, c_p in cal/(g·°C), s the
// molecular-structure factor (1.030 monatomic, 1.000 diatomic, 0.941
// triatomic, 0.880 for four or more atoms) and 0.3106 = d·c_p of N2. The
// gases' StandardDensity and SpecificHeat (SI) are converted to those units.
// Worked example in a maker's manual: Ar 150 sccm + N2 50 sccm gives 1.302.
// It panics if the lengths differ, a proportion is negative, all are zero, or
// a gas lacks density or heat-capacity data.
func MixtureMFCFactor(gs []Gas, a []float64) float64 {
	if len(gs) != len(a) {
		panic(fmt.Sprintf("gas: %d gases but %d proportions", len(gs), len(a)))
	}
	num, den, sum := 0.0, 0.0, 0.0
	for i, g := range gs {
		if a[i] < 0 || math.IsNaN(a[i]) {
			panic(fmt.Sprintf("gas: proportion %d is %g, want >= 0", i, a[i]))
		}
		if g.StandardDensity.V <= 0 || g.SpecificHeat.V <= 0 || g.StructureFactor <= 0 {
			panic(fmt.Sprintf("gas: %q lacks MFC formula data", g.Symbol))
		}
		d := g.StandardDensity.V                  // kg/m³ = g/L
		cp := g.SpecificHeat.V / (1000 * calorie) // J/(kg·K) -> cal/(g·K)
		num += a[i] * g.StructureFactor
		den += a[i] * d * cp
		sum += a[i]
	}
	if sum == 0 {
		panic("gas: all proportions are zero")
	}
	return mfcNitrogenProduct * num / den
}

// RelativeMFCFactor returns the factor that converts the reading of a thermal
// MFC calibrated for gas cal into the flow of gas g:
//
//	factor = GCF_g / GCF_cal
//
// using the tabulated factors (Gas.MFCFactor). An N2-calibrated MFC gives
// g.MFCFactor.V; one calibrated for g itself gives 1.
func RelativeMFCFactor(g, cal Gas) float64 {
	if g.MFCFactor.V <= 0 || cal.MFCFactor.V <= 0 {
		panic(fmt.Sprintf("gas: MFC factor missing for %q or %q", g.Symbol, cal.Symbol))
	}
	return g.MFCFactor.V / cal.MFCFactor.V
}
