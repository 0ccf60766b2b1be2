// Package kinetics predicts how graphene covers a copper foil during a
// recipe: the nucleation rate of domains on bare copper, the speed of their
// edges, the covered fraction (Kolmogorov–Johnson–Mehl–Avrami), the density
// of nuclei and the mean domain size, step by step and at the end, and maps
// of a predicted quantity over two grow-step parameters.
//
// All quantities are SI internally: K, Pa, s, m, nuclei per m², m/s;
// activation energies are in eV (the trade's unit), partial pressures are
// those of recipe.Plan. The package knows no database and no command line.
//
// # Model
//
// Conditions at time t come from the recipe's steps: temperature T(t) (linear
// within a step), CH4 partial pressure pC and H2 partial pressure pH
// (constant within a step). With k the Boltzmann constant in eV/K:
//
//	nucleation rate on bare copper  I = I0·exp(−En/kT)·(pC/p0)^a·(pH/p0)^(−b)
//	edge velocity                   G = G0·exp(−Eg/kT)·max(0, pC − pCeq)/p0·(pH/p0)^(−1/2)
//	radius grown since t = 0        R(t) = ∫ G dt
//	extended coverage               X(t) = κ·∫ I(τ)·(R(t) − R(τ))² dτ
//	coverage                        θ(t) = 1 − exp(−X(t))
//	nuclei density                  N(t) = ∫ I(τ)·(1 − θ(τ)) dτ
//	area-equivalent domain size     d(t) = sqrt(4θ/(π·N))
//
// pCeq is the CH4 pressure in equilibrium with graphite at the step's H2
// pressure (gas.EquilibriumMethanePressure, from the Gibbs energy of formation
// of CH4). Where pC ≤ pCeq the step etches: it is flagged and neither
// nucleation nor growth happens (the model does not shrink domains). κ is
// the domain's area per squared radius: π for round domains, 3√3/2 for
// hexagons whose corners lie at R.
//
// Expanding (R(t) − R(τ))² turns the double integral into three running
// moments,
//
//	X(t) = κ·[R²·M0 − 2R·M1 + M2],  M0 = ∫I dτ,  M1 = ∫I·R dτ,  M2 = ∫I·R² dτ,
//	dX/dt = 2κ·G·(R·M0 − M1),
//
// so a whole recipe integrates in one pass. Within a step whose temperature is
// constant, I and G are constant and the moments are polynomials in time
// (closed form); N needs ∫ I·exp(−X) dτ, done by composite Gauss–Legendre
// quadrature. Only ramps with carbon (temperature changing while CH4 flows)
// are integrated numerically, by the classical fourth-order Runge–Kutta
// method on (R, M0, M1, M2, N). Times to 50, 90 and 99 % coverage are found
// by root finding on X inside the step where they fall.
//
// Checks that need no lab data: at constant conditions from t = 0,
//
//	θ = 1 − exp(−κ·I·G²·t³/3)                (Avrami exponent 3)
//	N∞ = Γ(4/3)·(3/κ)^(1/3)·(I/G)^(2/3)
//
// and in site-saturated mode, with N0 nuclei per m² at the start of the first
// carbon step, θ = 1 − exp(−κ·N0·R²) (exponent 2).
//
// # Entry points
//
//   - NewProfile: the time profile of a recipe.Plan.
//   - Params, DefaultParams, LoadParams, ParseParams, FormatParams: the model
//     parameters and their YAML file.
//   - Params.NucleationRate, Params.GrowthRate: the rates at given conditions.
//   - Predict, PredictProfile: coverage, nuclei density, domain size and times
//     to coverage for a recipe.
//   - ParseAxis, Window: a map of predictions over two grow-step parameters,
//     with every point checked by recipe.Check.
//   - Prepare, Fit, ParseFix: calibration by weighted least squares
//     (Levenberg–Marquardt in kinetics/internal/lm), with the covariance
//     (covariance.go) and PredictInterval, SampleParams for its intervals.
//   - ParseTarget, Suggest: the cheapest grow step that meets targets.
//   - Parameters, Metrics, ParseMetric: the one vocabulary the parsers
//     accept (temperature, duration, pressure, gas symbols; coverage,
//     nuclei_density, domain_size); old spellings are refused with a
//     message naming the new one.
//   - InputError: every error about the caller's input, with a Kind, an
//     optional Reason to branch on, and a Hint; it unwraps to ErrAxis,
//     ErrSuggest, ErrFitInput, ErrMetric or ErrParams.
//
// Files follow the concepts: profile, nucleation, growth, coverage,
// predict; params, paramfile; window; prepared (the parameter-free part of
// a profile), fitparams, fit, fitter, covariance, uncertainty; target,
// space, search, root (the Illinois root finder), candidate; vocabulary,
// errors.
//
// References:
//
//	(Volume and page numbers below are from memory.)
//
//	- A. N. Kolmogorov, "On the statistical theory of the crystallization of
//	  metals", Izv. Akad. Nauk SSSR, Ser. Mat. 1, 355 (1937).
//	- W. A. Johnson, R. F. Mehl, "Reaction kinetics in processes of nucleation
//	  and growth", Trans. AIME 135, 416 (1939).
//	- M. Avrami, "Kinetics of phase change I–III", J. Chem. Phys. 7, 1103
//	  (1939); 8, 212 (1940); 9, 177 (1941).
//	- J. W. Christian, The Theory of Transformations in Metals and Alloys,
//	  Part I, 3rd ed., Pergamon (2002), chapter 1.
//	- I. Vlassiouk et al., "Graphene Nucleation Density on Copper: Fundamental
//	  Role of Background Pressure", J. Phys. Chem. C 117, 18919 (2013):
//	  nuclei density falls as temperature rises, apparent activation energy
//	  about 4 eV at low and about 9 eV at atmospheric pressure.
package kinetics
