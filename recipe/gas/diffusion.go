package gas

import (
	"fmt"
	"math"
)

// LennardJones holds the Lennard-Jones 12-6 potential parameters of a gas,
// as used by the Chapman–Enskog transport formulas.
type LennardJones struct {
	Sigma    float64 // collision diameter σ, m
	EpsilonK float64 // well depth ε/k_B, K
	Source   Source
}

const (
	srcBSL = Source("Bird, Stewart & Lightfoot, Transport Phenomena, 2nd ed. (2002), Table E.1 (from memory)")
	srcCu  = Source("σ: fcc nearest-neighbour distance a/√2, a = 3.6149 Å (from memory); ε/k_B = 1.15·T_b with T_b = 2835 K, " +
		"the corresponding-states rule of Bird, Stewart & Lightfoot eq. 1.4-14 (from memory); an estimate")
)

// lennardJones lists the parameters of the gases the table holds; a gas
// without an entry is treated as N2.
var lennardJones = map[string]LennardJones{
	"H2":  {2.915e-10, 38.0, srcBSL},
	"He":  {2.576e-10, 10.2, srcBSL},
	"Ar":  {3.432e-10, 122.4, srcBSL},
	"N2":  {3.667e-10, 99.8, srcBSL},
	"O2":  {3.433e-10, 113, srcBSL},
	"CH4": {3.780e-10, 154, srcBSL},
	"air": {3.617e-10, 97.0, srcBSL},
}

// CopperLennardJones is the estimate used for copper vapour (see its
// Source): there is no measured potential for Cu(g) in the usual tables.
var CopperLennardJones = LennardJones{2.556e-10, 3260, srcCu}

// LennardJonesOf returns g's Lennard-Jones parameters, N2's for a gas the
// list does not hold.
func LennardJonesOf(g Gas) LennardJones {
	if lj, ok := lennardJones[g.Symbol]; ok {
		return lj
	}
	return lennardJones["N2"]
}

// DiffusionCollisionIntegral returns the Chapman–Enskog collision integral
// for diffusion Ω_D at the reduced temperature T* = k_B·T/ε_AB, by the
// correlation of Neufeld, Janzen and Aziz:
//
//	Ω_D = A/T*^B + C/exp(D·T*) + E/exp(F·T*) + G/exp(H·T*)
//
// with A = 1.06036, B = 0.15610, C = 0.19300, D = 0.47635, E = 1.03587,
// F = 1.52996, G = 1.76474, H = 3.89411, good to about 0.1 % for
// 0.3 ≤ T* ≤ 100. It panics if T* is not positive.
//
// References:
//   - P. D. Neufeld, A. R. Janzen, R. A. Aziz, J. Chem. Phys. 57, 1100 (1972)
//     (coefficients from memory, as reprinted in Poling, Prausnitz &
//     O'Connell, The Properties of Gases and Liquids, 5th ed., eq. 11-3.6).
func DiffusionCollisionIntegral(tStar float64) float64 {
	if !(tStar > 0) {
		panic(fmt.Sprintf("gas: collision integral at non-positive T* %g", tStar))
	}
	return 1.06036/math.Pow(tStar, 0.15610) + 0.19300/math.Exp(0.47635*tStar) +
		1.03587/math.Exp(1.52996*tStar) + 1.76474/math.Exp(3.89411*tStar)
}

// BinaryDiffusivity returns the Chapman–Enskog (first approximation)
// binary diffusion coefficient in m²/s of species a and b, molar masses ma
// and mb in kg/mol, at temperature T (K) and pressure p (Pa):
//
//	D_AB = 0.0018583 · √(T³·(1/M_A + 1/M_B)) / (p·σ_AB²·Ω_D)   cm²/s
//
// with T in K, M in g/mol, p in atm, σ_AB = (σ_A + σ_B)/2 in Å and Ω_D at
// T* = T/√(ε_A·ε_B/k_B²). D ∝ T^1.5/Ω_D(T)/p, close to T^1.75/p over
// furnace temperatures. It panics if T, p or a molar mass is not positive.
//
// References:
//   - R. B. Bird, W. E. Stewart, E. N. Lightfoot, Transport Phenomena, 2nd
//     ed., Wiley (2002), eq. 17.3-12.
func BinaryDiffusivity(a, b LennardJones, ma, mb, T, p float64) float64 {
	if !(T > 0) || !(p > 0) || !(ma > 0) || !(mb > 0) {
		panic(fmt.Sprintf("gas: diffusivity needs T, p, M > 0, got T=%g K, p=%g Pa, M=%g, %g kg/mol", T, p, ma, mb))
	}
	sigma := (a.Sigma + b.Sigma) / 2 * 1e10 // Å
	omega := DiffusionCollisionIntegral(T / math.Sqrt(a.EpsilonK*b.EpsilonK))
	d := 0.0018583 * math.Sqrt(T*T*T*(1/(ma*1e3)+1/(mb*1e3))) / (p / StandardAtmosphere * sigma * sigma * omega)
	return d * 1e-4
}

// CopperDiffusivity returns the diffusion coefficient in m²/s of copper
// vapour, a trace species, through a gas mixture gs with mole fractions xs
// at T (K) and p (Pa): each binary coefficient from BinaryDiffusivity with
// CopperLennardJones, combined by Blanc's law 1/D = Σ x_i/D_i. Without
// gases it uses N2. It panics as BinaryDiffusivity does.
//
// References:
//   - A. Blanc, J. Phys. Theor. Appl. 7, 825 (1908), as given in Poling,
//     Prausnitz & O'Connell, The Properties of Gases and Liquids, 5th ed.
func CopperDiffusivity(gs []Gas, xs []float64, T, p float64) float64 {
	if len(gs) == 0 {
		n2, _ := Lookup("N2")
		gs, xs = []Gas{n2}, []float64{1}
	}
	inv, total := 0.0, 0.0
	for i, g := range gs {
		if xs[i] <= 0 {
			continue
		}
		inv += xs[i] / BinaryDiffusivity(CopperLennardJones, LennardJonesOf(g), CopperMolarMass, g.MolarMass.V, T, p)
		total += xs[i]
	}
	if total == 0 {
		return CopperDiffusivity(nil, nil, T, p)
	}
	return total / inv
}

// CopperDiffusionRecessionRate returns the rate in m/s at which a copper
// surface at T (K) thins when its vapour must diffuse through a stagnant
// gas layer of thickness delta (m) to a sink where its pressure is zero
// (the cold tube wall), in the gas mixture gs, xs at total pressure p (Pa):
//
//	J = D·c_sat/δ,  c_sat = p_sat(T)/(R·T),  rate = J·M_Cu/ρ_Cu
//
// with D from CopperDiffusivity and p_sat from CopperVapourPressure. It is
// an estimate (evaporation limited by diffusion through a boundary layer,
// the film model), valid when the mean free path is far below δ; it
// ignores convection, which thins the layer, so δ is the model's main
// uncertainty. It panics if T, p or delta is not positive.
//
// References:
//   - R. B. Bird, W. E. Stewart, E. N. Lightfoot, Transport Phenomena, 2nd
//     ed., Wiley (2002), §18.2 (diffusion through a stagnant gas film).
func CopperDiffusionRecessionRate(gs []Gas, xs []float64, T, p, delta float64) float64 {
	if !(delta > 0) {
		panic(fmt.Sprintf("gas: boundary layer thickness %g m, want > 0", delta))
	}
	D := CopperDiffusivity(gs, xs, T, p)
	c := CopperVapourPressure(T) / (R * T)
	return D * c / delta * CopperMolarMass / CopperDensity
}
