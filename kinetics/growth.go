package kinetics

import (
	"math"

	"github.com/foilrun/foilrun/recipe/gas"
)

// GrowthRate returns the domain-edge velocity G (m/s) at temperature T (K),
// CH4 pressure pC and H2 pressure pH (Pa), and whether the conditions etch:
//
//	pCeq = pH² / (Kp·p°)                           (gas.EquilibriumMethanePressure)
//	G    = G0·exp(−Eg/kT)·max(0, pC − pCeq)/p0·(pH/p0)^(−1/2)
//
// with pH raised to HydrogenFloor if lower in the last factor. Where
// pC ≤ pCeq (and methane flows) hydrogen etches graphite: G is 0 and etching
// is true. Without methane G is 0 and etching is false. It panics if T <= 0.
//
// References: NIST-JANAF Thermochemical Tables (ΔfG° of CH4, via recipe/gas);
// the package comment for the model.
func (p Params) GrowthRate(T, pC, pH float64) (G float64, etching bool) {
	if pC <= 0 {
		return 0, false
	}
	eq := gas.EquilibriumMethanePressure(T, pH)
	if pC <= eq {
		return 0, true
	}
	return p.growth(T, pC-eq, pH), false
}

// growth is G for an excess methane pressure dp = pC − pCeq > 0.
func (p Params) growth(T, dp, pH float64) float64 {
	return p.G0 * math.Exp(-p.Eg/(BoltzmannEV*T)) * dp / p.P0 / math.Sqrt(math.Max(pH, HydrogenFloor)/p.P0)
}

// rates returns I, G and the etching flag at once (one equilibrium
// evaluation).
func (p Params) rates(T, pC, pH float64) (I, G float64, etching bool) {
	if pC <= 0 {
		return 0, 0, false
	}
	eq := gas.EquilibriumMethanePressure(T, pH)
	if pC <= eq {
		return 0, 0, true
	}
	return p.nucleation(T, pC, pH), p.growth(T, pC-eq, pH), false
}
