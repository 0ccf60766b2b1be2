package kinetics

import (
	"math"

	"github.com/foilrun/foilrun/recipe/gas"
)

// ElementaryCharge is e in C, gas.ElementaryCharge (exact, SI 2019);
// BoltzmannEV = k_B/e is the Boltzmann constant in eV/K (8.617333262e-5,
// CODATA 2018).
const (
	ElementaryCharge = gas.ElementaryCharge
	BoltzmannEV      = gas.Boltzmann / ElementaryCharge
)

// HydrogenFloor is the H2 partial pressure (Pa) used in the (pH/p0) factors
// when a step has less hydrogen (or none): a pumped tube always holds some
// background hydrogen and water. A model choice, not a measured value.
const HydrogenFloor = 0.01

// NucleationRate returns the rate I (nuclei per m² per s) at which domains
// nucleate on bare copper at temperature T (K), CH4 pressure pC and H2
// pressure pH (Pa):
//
//	I = I0·exp(−En/kT)·(pC/p0)^a·(pH/p0)^(−b)
//
// with pH raised to HydrogenFloor if lower. It is zero without methane and
// where the step etches (pC ≤ pCeq; see GrowthRate). It panics if T <= 0.
//
// References: see the package comment (Vlassiouk et al. 2013 for the
// Arrhenius form of the nuclei density).
func (p Params) NucleationRate(T, pC, pH float64) float64 {
	if pC <= 0 || pC <= gas.EquilibriumMethanePressure(T, pH) {
		return 0
	}
	return p.nucleation(T, pC, pH)
}

func (p Params) nucleation(T, pC, pH float64) float64 {
	return p.I0 * math.Exp(-p.En/(BoltzmannEV*T)) * math.Pow(pC/p.P0, p.A) * math.Pow(math.Max(pH, HydrogenFloor)/p.P0, -p.B)
}
