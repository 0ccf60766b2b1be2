package kinetics

import (
	"fmt"
	"math"
)

// Shape is the outline of a graphene domain.
type Shape string

// The domain shapes.
const (
	Round     Shape = "round"     // κ = π
	Hexagonal Shape = "hexagonal" // κ = 3√3/2, corners at the radius R
)

// Kappa returns the domain area per squared radius: π for round domains and
// 3√3/2 for hexagons whose corners lie on the radius. The zero Shape counts
// as Round. It panics on an unknown shape.
func (s Shape) Kappa() float64 {
	switch s {
	case Round, "":
		return math.Pi
	case Hexagonal:
		return 3 * math.Sqrt(3) / 2
	}
	panic(fmt.Sprintf("kinetics: unknown domain shape %q", string(s)))
}

// Mode is how nuclei appear.
type Mode string

// The nucleation modes.
const (
	// Continuous: nuclei keep forming on bare copper at rate I (Avrami
	// exponent 3 at constant conditions).
	Continuous Mode = "continuous"
	// SiteSaturated: Params.SiteDensity nuclei per m² appear at the start of
	// the first carbon step and no more later (Avrami exponent 2).
	SiteSaturated Mode = "site-saturated"
)

// Params are the parameters of the nucleation and growth model, in the
// equations of the package comment. A lab calibrates them from its own runs;
// DefaultParams are illustrative.
type Params struct {
	En float64 // nucleation activation energy, eV; may be negative (effective value)
	I0 float64 // nucleation prefactor, nuclei per m² per s; > 0
	A  float64 // CH4 pressure order of nucleation, a (dimensionless, any sign)
	B  float64 // H2 pressure order of nucleation, b: I ∝ (pH/p0)^(−b)
	Eg float64 // growth activation energy, eV; may be negative
	G0 float64 // growth prefactor, m/s; > 0
	P0 float64 // reference pressure p0, Pa; > 0

	Shape Shape // domain outline; "" means Round
	Mode  Mode  // nucleation mode; "" means Continuous

	// SiteDensity is N0, the nuclei per m² that appear at once in
	// site-saturated mode; unused in continuous mode.
	SiteDensity float64

	// Covariance of the free parameters, when a fit estimated them; nil
	// otherwise. Predict does not use it.
	Covariance *Covariance
	// Source says where the numbers came from ("illustrative defaults",
	// "fit of 14 runs", ...). Runs is the number of runs a fit used and
	// Date when it was made (text, e.g. "2026-03-02"). Predict does not use
	// them.
	Source string
	Runs   int
	Date   string
	// Bounds are the ranges a fit kept its free parameters within, by
	// file key ("growth_energy", ...; see FitParameters), [lo, hi] in the
	// file's units (eV for energies, SI values for prefactors); nil when
	// not from a fit. A later Fit started from these parameters uses them
	// in place of DefaultBounds. Predict does not use them.
	Bounds map[string][2]float64
	// CoverageOnly is true for a calibration from coverage alone: it
	// predicts coverage and the time to reach it, not nuclei density or
	// domain size (the separate rates are not identified).
	CoverageOnly bool
}

// Covariance is the covariance matrix of named free parameters. Names are
// the parameter file's keys ("growth_energy", ...); Matrix is square,
// symmetric, in the SI units of the file's values.
type Covariance struct {
	Names  []string
	Matrix [][]float64
}

// DefaultParams returns illustrative parameters, NOT a calibration. They were
// chosen by hand so that the three recipe templates behave as commonly
// reported (common practice; see the package tests): the low-pressure
// template near 1000 °C covers the foil in a few minutes with domains near
// 10 µm, the slow large-domain template grows domains of a few hundred µm
// over more than an hour, and the final nuclei density falls as the growth
// temperature rises with an apparent activation energy of
// (2/3)·(Eg − En) = 4 eV, the value reported for low-pressure growth
// (Vlassiouk et al. 2013). A lab should fit its own.
func DefaultParams() Params {
	return Params{
		En: -1.5, I0: 50, A: 2.5, B: 2,
		Eg: 4.5, G0: 1.1e11,
		P0:    100,
		Shape: Round, Mode: Continuous,
		SiteDensity: 1e10,
		Source:      "illustrative defaults, not a calibration",
	}
}

// Kappa returns κ of the parameters' domain shape.
func (p Params) Kappa() float64 { return p.Shape.Kappa() }

// Validate reports the first parameter that is out of its domain, as an
// *InputError of kind KindParams (wrapping ErrParams).
func (p Params) Validate() error {
	finite := func(name string, v float64) error {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return inputErr(KindParams, "kinetics parameters: %s %g is not a finite number", name, v)
		}
		return nil
	}
	positive := func(name string, v float64) error {
		if err := finite(name, v); err != nil {
			return err
		}
		if !(v > 0) {
			return inputErr(KindParams, "kinetics parameters: %s %g must be greater than zero", name, v)
		}
		return nil
	}
	for _, c := range []struct {
		name string
		v    float64
		pos  bool
	}{
		{"nucleation_energy", p.En, false}, {"nucleation_prefactor", p.I0, true},
		{"methane_order", p.A, false}, {"hydrogen_order", p.B, false},
		{"growth_energy", p.Eg, false}, {"growth_prefactor", p.G0, true},
		{"reference_pressure", p.P0, true},
	} {
		check := finite
		if c.pos {
			check = positive
		}
		if err := check(c.name, c.v); err != nil {
			return err
		}
	}
	switch p.Shape {
	case Round, Hexagonal, "":
	default:
		return inputErr(KindParams, "kinetics parameters: unknown shape %q, want round or hexagonal", string(p.Shape))
	}
	switch p.Mode {
	case Continuous, "":
	case SiteSaturated:
		if err := positive("site_density", p.SiteDensity); err != nil {
			return err
		}
	default:
		return inputErr(KindParams, "kinetics parameters: unknown mode %q, want continuous or site-saturated", string(p.Mode))
	}
	return nil
}
