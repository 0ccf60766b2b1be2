package gas

import (
	"fmt"
	"math"
)

// ViscosityPoint is one handbook value of a dilute gas's viscosity.
type ViscosityPoint struct {
	// T is the temperature in K.
	T float64
	// Mu is the viscosity in Pa·s with its source.
	Mu Value
}

// ViscosityData is the viscosity model of one gas: Sutherland's law fitted
// exactly through two handbook points,
//
//	η(T) = η1 · (T/T1)^(3/2) · (T1 + S) / (T + S)
//
// with the Sutherland constant S (K) chosen so that η(T2) = η2. The fit is
// good to a few per cent from about Min to Max; outside it extrapolates.
type ViscosityData struct {
	// Low and High are the two handbook points, Low.T < High.T.
	Low, High ViscosityPoint
	// Sutherland is the fitted Sutherland constant S in K.
	Sutherland float64
	// Min and Max bound the temperatures (K) where the model is trusted.
	Min, Max float64
}

// newViscosityData fits Sutherland's constant through two points:
//
//	q = (T2/T1)^(3/2),  r = η2/η1,  S = (q·T1 − r·T2) / (r − q)
func newViscosityData(lo, hi ViscosityPoint, tmin, tmax float64) ViscosityData {
	q := math.Pow(hi.T/lo.T, 1.5)
	r := hi.Mu.V / lo.Mu.V
	s := (q*lo.T - r*hi.T) / (r - q)
	return ViscosityData{Low: lo, High: hi, Sutherland: s, Min: tmin, Max: tmax}
}

// Viscosity returns the dilute-gas (low-density) viscosity of g in Pa·s at
// temperature T in K, from Sutherland's law fitted through two handbook
// values (see ViscosityData). Dilute-gas viscosity does not depend on
// pressure, which holds well from vacuum-furnace pressures to a few bar.
// It panics if T <= 0 or if g has no viscosity data (a zero Gas).
//
// References:
//   - W. Sutherland, Phil. Mag. 36, 507 (1893).
func (g Gas) Viscosity(T float64) float64 {
	d := g.ViscosityData
	if d.Low.Mu.V <= 0 {
		panic(fmt.Sprintf("gas: %q has no viscosity data", g.Symbol))
	}
	if !(T > 0) {
		panic(fmt.Sprintf("gas: viscosity at non-positive temperature %g K", T))
	}
	t1 := d.Low.T
	return d.Low.Mu.V * math.Pow(T/t1, 1.5) * (t1 + d.Sutherland) / (T + d.Sutherland)
}

// MixtureViscosity returns the viscosity in Pa·s of a dilute gas mixture of gs
// with mole fractions x at temperature T (K), by Wilke's mixing rule applied to
// the pure-gas viscosities of Gas.Viscosity; see WilkeViscosity. The fractions
// need not sum to one (the rule is scale-free in x). It panics if the lengths
// differ, a fraction is negative, or all fractions are zero.
func MixtureViscosity(gs []Gas, x []float64, T float64) float64 {
	if len(gs) != len(x) {
		panic(fmt.Sprintf("gas: %d gases but %d mole fractions", len(gs), len(x)))
	}
	var mu, m [8]float64
	var mus, ms []float64
	if len(gs) <= len(mu) {
		mus, ms = mu[:len(gs)], m[:len(gs)]
	} else {
		mus, ms = make([]float64, len(gs)), make([]float64, len(gs))
	}
	for i, g := range gs {
		mus[i] = g.Viscosity(T)
		ms[i] = g.MolarMass.V
	}
	return WilkeViscosity(mus, ms, x)
}

// WilkeViscosity returns the viscosity of a dilute gas mixture from the pure
// component viscosities mu (any unit; the result has the same unit), molar
// masses m (any common unit) and mole fractions x, by Wilke's rule:
//
//	η_mix = Σ_i x_i·η_i / Σ_j x_j·Φ_ij
//	Φ_ij  = [1 + (η_i/η_j)^(1/2)·(M_j/M_i)^(1/4)]² / [8·(1 + M_i/M_j)]^(1/2)
//
// Φ_ii = 1. It panics if the lengths differ, a fraction is negative, all
// fractions are zero, or a viscosity or molar mass is not positive.
//
// References:
//   - C. R. Wilke, A Viscosity Equation for Gas Mixtures, J. Chem. Phys. 18,
//     517 (1950).
//   - R. B. Bird, W. E. Stewart, E. N. Lightfoot, Transport Phenomena, 2nd ed.
//     (2002), eqs. 1.4-15 and 1.4-16.
func WilkeViscosity(mu, m, x []float64) float64 {
	n := len(mu)
	if len(m) != n || len(x) != n {
		panic(fmt.Sprintf("gas: Wilke rule needs equal lengths, got %d viscosities, %d molar masses, %d fractions", n, len(m), len(x)))
	}
	sum := 0.0
	for i := range n {
		if x[i] < 0 || math.IsNaN(x[i]) {
			panic(fmt.Sprintf("gas: mole fraction %d is %g, want >= 0", i, x[i]))
		}
		if !(mu[i] > 0) || !(m[i] > 0) {
			panic(fmt.Sprintf("gas: component %d has viscosity %g and molar mass %g, want both > 0", i, mu[i], m[i]))
		}
		sum += x[i]
	}
	if sum == 0 {
		panic("gas: all mole fractions are zero")
	}
	out := 0.0
	for i := range n {
		if x[i] == 0 {
			continue
		}
		den := 0.0
		for j := range n {
			if x[j] == 0 {
				continue
			}
			if i == j {
				den += x[j]
				continue
			}
			a := 1 + math.Sqrt(mu[i]/mu[j])*math.Sqrt(math.Sqrt(m[j]/m[i]))
			den += x[j] * a * a / math.Sqrt(8*(1+m[i]/m[j]))
		}
		out += x[i] * mu[i] / den
	}
	return out
}

// MeanFreePath returns the mean free path in m of gas molecules from the
// viscosity η (Pa·s), temperature T (K), pressure p (Pa) and molar mass M
// (kg/mol), by the elementary kinetic-theory relation η = ½·ρ·v̄·λ with
// ρ = p·M/(R·T) and v̄ = (8RT/(πM))^(1/2):
//
//	λ = (η/p) · (π·R·T / (2·M))^(1/2)
//
// This viscosity-based definition is the one usually used for Knudsen numbers
// of flows; the hard-sphere collision formula λ = k_B·T/(√2·π·d²·p) gives
// values of the same size. It panics if p, T or M is not positive.
//
// References:
//   - E. H. Kennard, Kinetic Theory of Gases (1938), ch. 4.
//   - S. G. Jennings, The mean free path in air, J. Aerosol Sci. 19, 159 (1988).
func MeanFreePath(viscosity, T, p, molarMass float64) float64 {
	if !(p > 0) || !(T > 0) || !(molarMass > 0) {
		panic(fmt.Sprintf("gas: mean free path needs p, T, M > 0, got p=%g Pa, T=%g K, M=%g kg/mol", p, T, molarMass))
	}
	return viscosity / p * math.Sqrt(math.Pi*R*T/(2*molarMass))
}
