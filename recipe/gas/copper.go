package gas

import (
	"fmt"
	"math"
)

// CopperVapourPressure returns the vapour pressure of copper in Pa at
// temperature T (K). Below the melting point it is the handbook equation for
// solid copper,
//
//	log10(p/atm) = 9.123 − 17748/T − 0.7317·log10(T)
//
// (Alcock et al. 1984, from memory). Above the melting point Tm the liquid is
// the stable phase and its vapour pressure is lower than the solid equation's
// extrapolation by the fusion term
//
//	p_liquid = p_solid,extrapolated · exp(ΔH_fus/R · (1/T − 1/Tm))
//
// with ΔH_fus = CopperFusionEnthalpy (13.26 kJ/mol) taken as constant.
// Without that term the extrapolated solid equation gives 12 Pa instead of
// 10 Pa at 1661 K. Trusted from about 1000 K to 2000 K to about ±20 %; the
// data sets themselves differ by that much. It returns 0 for T <= 0.
//
// References:
//   - C. B. Alcock, V. P. Itkin, M. K. Horrigan, Can. Metall. Q. 23, 309 (1984).
func CopperVapourPressure(T float64) float64 {
	if !(T > 0) {
		return 0
	}
	logp := 9.123 - 17748/T - 0.7317*math.Log10(T)
	p := math.Pow(10, logp) * StandardAtmosphere
	if T > CopperMeltingPoint {
		p *= math.Exp(CopperFusionEnthalpy / R * (1/T - 1/CopperMeltingPoint))
	}
	return p
}

// HertzKnudsenFlux returns the net evaporation flux in mol/(m²·s) from a
// surface with saturation vapour pressure psat (Pa) into gas at pressure p
// (Pa) of the same species, at temperature T (K), for molar mass M (kg/mol):
//
//	J = α · max(0, psat − p) / (2π·M·R·T)^(1/2),  α = 1
//
// (the molecular form φ = α·Δp/(2π·m·k_B·T)^(1/2) divided by N_A). The
// evaporation coefficient α = 1 makes this an upper bound; in a background gas
// of Torr to atmospheric pressure diffusion through the gas makes the real
// loss far lower. It panics if T or M is not positive.
//
// References:
//   - K. W. Kolasinski, Surface Science, 3rd ed. (2012), Hertz–Knudsen equation.
func HertzKnudsenFlux(psat, p, T, molarMass float64) float64 {
	if !(T > 0) || !(molarMass > 0) {
		panic(fmt.Sprintf("gas: Hertz-Knudsen flux needs T, M > 0, got T=%g K, M=%g kg/mol", T, molarMass))
	}
	return max(0, psat-p) / math.Sqrt(2*math.Pi*molarMass*R*T)
}

// CopperRecessionRate returns the upper-bound rate in m/s at which a free
// copper surface at temperature T (K) thins by evaporation into vacuum
// (copper partial pressure zero): the Hertz–Knudsen flux at
// CopperVapourPressure(T), times CopperMolarMass / CopperDensity. Near
// 1050 °C this is about 10 µm per hour per free face.
func CopperRecessionRate(T float64) float64 {
	if !(T > 0) {
		return 0
	}
	j := HertzKnudsenFlux(CopperVapourPressure(T), 0, T, CopperMolarMass)
	return j * CopperMolarMass / CopperDensity
}
