package kinetics

import (
	"errors"
	"fmt"
	"math"
	"runtime"
	"sort"
	"strconv"
	"strings"
	"sync"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/mathext"

	"github.com/foilrun/foilrun/recipe/gas"
)

// The fit works on the parameter vector
//
//	v = (En, ln I0, a, b, Eg, ln G0, ln N0)
//
// (energies in eV, prefactors as natural logarithms of their SI values), in
// which ln I and ln G are linear:
//
//	ln I = ln I0 − En·u + a·ln(pC/p0) − b·ln(pH/p0),  u = 1/(k·T)
//	ln G = ln G0 − Eg·u + ln((pC − pCeq)/p0) − ½·ln(pH/p0)
//
// so the parameter-independent parts (u, the logarithms of the pressures,
// pCeq) are computed once per run (Prepared) and each evaluation only
// exponentiates and integrates.

// Indexes of the fit vector.
const (
	fitEn = iota
	fitLnI0
	fitA
	fitB
	fitEg
	fitLnG0
	fitLnN0
	nFit
)

type fitVec [nFit]float64

// FitParameter describes one parameter a fit can estimate or hold fixed.
type FitParameter struct {
	Key   string // parameter-file key, e.g. "growth_energy"
	Short string // short name, e.g. "Eg"
	Unit  string // unit of the value in the file: "eV", "/m2/s", "m/s", "/m2" or ""
	Log   bool   // fitted as the natural logarithm of the SI value
}

// FitParameters lists the parameters a fit knows, in fit order.
var FitParameters = [nFit]FitParameter{
	{"nucleation_energy", "En", "eV", false},
	{"nucleation_prefactor", "I0", "/m2/s", true},
	{"methane_order", "a", "", false},
	{"hydrogen_order", "b", "", false},
	{"growth_energy", "Eg", "eV", false},
	{"growth_prefactor", "G0", "m/s", true},
	{"site_density", "N0", "/m2", true},
}

var fitKinds = [nFit]*paramKind{&energyKind, &rateKind, nil, nil, &energyKind, &speedKind, &areaKind}

// fitIndex returns the index of a parameter by key or short name (case
// insensitive), or -1.
func fitIndex(name string) int {
	for i, fp := range FitParameters {
		if strings.EqualFold(name, fp.Key) || strings.EqualFold(name, fp.Short) {
			return i
		}
	}
	return -1
}

func knownFitNames() string {
	var s []string
	for _, fp := range FitParameters {
		s = append(s, fp.Short+" ("+fp.Key+")")
	}
	return strings.Join(s, ", ")
}

// ErrFitInput is wrapped by every error about what was given to Fit (too
// few runs, an unknown parameter, data that cannot identify the model), so
// callers can report it as bad input.
var ErrFitInput = errors.New("bad fit input")

// inputError is an error about the caller's input; it wraps a sentinel
// without adding to the message.
type inputError struct {
	msg  string
	kind error
}

func (e *inputError) Error() string { return e.msg }
func (e *inputError) Unwrap() error { return e.kind }

func fitErr(format string, args ...any) error {
	return &inputError{"fit: " + fmt.Sprintf(format, args...), ErrFitInput}
}

// ParseFix reads NAME=VALUE for a parameter held fixed, e.g. "Eg=1.9",
// "growth_energy=1.9 eV" or "I0=5e10 /m2/s". NAME is a short name (En, I0,
// a, b, Eg, G0, N0) or a parameter-file key; VALUE is a plain number in the
// file's unit (eV, /m2/s, m/s, /m2) or a number with one of the file's
// units. It returns the file key and the SI value. Errors wrap ErrFitInput.
func ParseFix(s string) (key string, value float64, err error) {
	name, val, ok := strings.Cut(s, "=")
	name, val = strings.TrimSpace(name), strings.TrimSpace(val)
	if !ok || name == "" || val == "" {
		return "", 0, fitErr("--fix %q: want NAME=VALUE, e.g. Eg=1.9", s)
	}
	i := fitIndex(name)
	if i < 0 {
		return "", 0, fitErr("--fix %q: unknown parameter %q, want one of %s", s, name, knownFitNames())
	}
	fp := FitParameters[i]
	if x, perr := strconv.ParseFloat(val, 64); perr == nil {
		value = x
	} else if k := fitKinds[i]; k != nil {
		value, err = k.parse(val)
		if err != nil {
			return "", 0, fitErr("--fix %q: %v", s, err)
		}
	} else {
		return "", 0, fitErr("--fix %q: %q is not a number", s, val)
	}
	if math.IsNaN(value) || math.IsInf(value, 0) || (fp.Log && !(value > 0)) {
		return "", 0, fitErr("--fix %q: %s must be a finite number%s", s, fp.Short, map[bool]string{true: " greater than zero", false: ""}[fp.Log])
	}
	return fp.Key, value, nil
}

func vecOf(p Params) fitVec {
	return fitVec{p.En, math.Log(p.I0), p.A, p.B, p.Eg, math.Log(p.G0), math.Log(math.Max(p.SiteDensity, math.SmallestNonzeroFloat64))}
}

func (v fitVec) apply(p Params) Params {
	p.En, p.I0, p.A, p.B, p.Eg, p.G0 = v[fitEn], math.Exp(v[fitLnI0]), v[fitA], v[fitB], v[fitEg], math.Exp(v[fitLnG0])
	if p.Mode == SiteSaturated {
		p.SiteDensity = math.Exp(v[fitLnN0])
	}
	return p
}

// siValue returns parameter i of p in SI (not logarithmic) units.
func siValue(p Params, i int) float64 {
	return [nFit]float64{p.En, p.I0, p.A, p.B, p.Eg, p.G0, p.SiteDensity}[i]
}

// conditions are the parameter-independent parts of the rates at one
// temperature and gas composition.
type conditions struct {
	etch          bool
	u             float64 // 1/(k·T), 1/eV
	lpc, lph, ldp float64 // ln(pC/p0), ln(max(pH, floor)/p0), ln((pC − pCeq)/p0)
}

func newConditions(T, pC, pH, p0 float64) conditions {
	eq := gas.EquilibriumMethanePressure(T, pH)
	c := conditions{u: 1 / (BoltzmannEV * T), lpc: math.Log(pC / p0), lph: math.Log(math.Max(pH, HydrogenFloor) / p0)}
	if pC <= eq {
		c.etch = true
		return c
	}
	c.ldp = math.Log((pC - eq) / p0)
	return c
}

func (c conditions) lnI(v *fitVec) float64 {
	return v[fitLnI0] - v[fitEn]*c.u + v[fitA]*c.lpc - v[fitB]*c.lph
}

func (c conditions) lnG(v *fitVec) float64 {
	return v[fitLnG0] - v[fitEg]*c.u + c.ldp - 0.5*c.lph
}

// rates returns I and G (0, 0 where the conditions etch).
func (c conditions) rates(v *fitVec) (I, G float64) {
	if c.etch {
		return 0, 0
	}
	return math.Exp(c.lnI(v)), math.Exp(c.lnG(v))
}

// prepSeg is one carbon segment of a Prepared profile.
type prepSeg struct {
	seg      int // index in Profile.Segments
	duration float64
	ramp     bool
	iso      conditions   // constant-temperature segment (at T1, as Predict)
	nodes    []conditions // ramp: at 0, h/2, h, 3h/2, … (2n+1 nodes)
	n        int
	h        float64
}

// Prepared is a profile with everything that does not depend on the model's
// rate parameters computed once: the temperature factor 1/kT, the pressure
// logarithms and the graphite-equilibrium CH4 pressure of every carbon
// step, and of every Runge–Kutta node of ramps with methane. Evaluate gives
// the same final coverage and nuclei density as PredictProfile (to rounding)
// at a fraction of the cost, for fits and searches that predict one profile
// many times. The reference pressure p0, shape, mode and numerics are fixed
// at preparation.
type Prepared struct {
	Profile Profile
	P0      float64 // reference pressure the logarithms use, Pa
	Shape   Shape
	Mode    Mode
	Options Options // numerics, defaults filled in

	segs []prepSeg
	nIso int // constant-temperature carbon segments that can grow or nucleate
}

// Prepare lays out a profile for repeated evaluation with parameters that
// share p's reference pressure, shape and mode. It returns the errors
// PredictProfile would for an unusable profile or invalid parameters.
func Prepare(prof Profile, p Params, opts Options) (*Prepared, error) {
	if err := p.Validate(); err != nil {
		return nil, err
	}
	// Reuse PredictProfile's checks of the profile.
	if _, err := PredictProfile(Profile{Segments: prof.Segments}, p, Options{Panels: 1, RampStep: math.Inf(1)}); err != nil {
		return nil, err
	}
	opts = opts.withDefaults()
	pr := &Prepared{Profile: prof, P0: p.P0, Shape: p.Shape, Mode: p.Mode, Options: opts}
	if pr.Mode == "" {
		pr.Mode = Continuous
	}
	for i, s := range prof.Segments {
		if !s.Carbon() {
			continue
		}
		ps := prepSeg{seg: i, duration: s.Duration}
		if s.Isothermal() || s.Duration == 0 {
			ps.iso = newConditions(s.T1, s.PC, s.PH, p.P0)
			if !ps.iso.etch {
				pr.nIso++
			}
		} else {
			ps.ramp = true
			ps.n = int(math.Ceil(s.Duration / opts.RampStep))
			if ps.n < 8 {
				ps.n = 8
			}
			ps.h = s.Duration / float64(ps.n)
			ps.nodes = make([]conditions, 2*ps.n+1)
			ps.nodes[0] = newConditions(s.TemperatureAt(0), s.PC, s.PH, p.P0)
			for k := 0; k < ps.n; k++ {
				t := float64(k) * ps.h
				ps.nodes[2*k+1] = newConditions(s.TemperatureAt(t+ps.h/2), s.PC, s.PH, p.P0)
				ps.nodes[2*k+2] = newConditions(s.TemperatureAt(t+ps.h), s.PC, s.PH, p.P0)
			}
		}
		pr.segs = append(pr.segs, ps)
	}
	return pr, nil
}

// HasCarbon reports whether methane flows in any step of the profile.
func (pr *Prepared) HasCarbon() bool { return len(pr.segs) > 0 }

// CarbonTemperatures returns the lowest and highest temperature (K) at
// which methane flows; NaN, NaN without carbon.
func (pr *Prepared) CarbonTemperatures() (lo, hi float64) {
	lo, hi = math.NaN(), math.NaN()
	for _, ps := range pr.segs {
		s := pr.Profile.Segments[ps.seg]
		a, b := math.Min(s.T0, s.T1), math.Max(s.T0, s.T1)
		if !ps.ramp {
			a, b = s.T1, s.T1
		}
		if math.IsNaN(lo) || a < lo {
			lo = a
		}
		if math.IsNaN(hi) || b > hi {
			hi = b
		}
	}
	return lo, hi
}

// Evaluate returns the final coverage θ and nuclei density N (1/m²) for
// parameters p, as PredictProfile would. It panics if p's reference
// pressure, shape or mode differ from the ones prepared for.
func (pr *Prepared) Evaluate(p Params) (theta, N float64) {
	pr.mustMatch(p)
	v := vecOf(p)
	X, N := pr.final(&v, nil, -1, math.NaN())
	return -math.Expm1(-X), N
}

// closed reports whether the profile's only carbon step is at constant
// temperature in continuous mode, where coverage and nuclei density have
// a closed form (see closedForm).
func (pr *Prepared) closed() bool {
	return pr.Mode == Continuous && len(pr.segs) == 1 && !pr.segs[0].ramp
}

// closedForm returns, for constant I = exp(lnI) and G = exp(lnG) over t
// seconds from bare copper,
//
//	X = c·t³,  c = κ·I·G²/3
//	N = I·∫₀ᵗ exp(−c·τ³) dτ = I·c^(−1/3)·Γ(4/3)·P(1/3, X)
//
// (P the regularised lower incomplete gamma function) and the derivatives
// ∂ln N/∂ln I = 2/3 + D and ∂ln N/∂ln G = −2/3 + 2D with
// D = ∂ln P/∂ln X = X^(1/3)·e^(−X)/(Γ(1/3)·P). It agrees with the
// Gauss–Legendre quadrature of PredictProfile to about 1e-10 relative.
//
// References: Abramowitz & Stegun, Handbook of Mathematical Functions,
// 6.5.1 (incomplete gamma function).
func closedForm(kappa, lnI, lnG, t float64) (X, N, dI, dG float64) {
	if !(t > 0) {
		return 0, 0, 0, 0
	}
	lnc := math.Log(kappa/3) + lnI + 2*lnG
	X = math.Exp(lnc + 3*math.Log(t))
	P := mathext.GammaIncReg(1.0/3, X)
	N = math.Exp(lnI-lnc/3) * gamma43 * P
	D := 0.0
	if P > 0 {
		D = math.Exp(math.Log(X)/3-X-lgamma13) / P
	}
	return X, N, 2.0/3 + D, -2.0/3 + 2*D
}

var (
	gamma43  = math.Gamma(4.0 / 3)
	lgamma13 = math.Log(math.Gamma(1.0 / 3))
)

// final returns the final extended coverage X and nuclei density N (see
// run for the arguments).
func (pr *Prepared) final(v *fitVec, iso []float64, seg int, dur float64) (X, N float64) {
	if pr.closed() {
		ps := &pr.segs[0]
		if ps.iso.etch {
			return 0, 0
		}
		d := ps.duration
		if ps.seg == seg {
			d = dur
		}
		lnI, lnG := ps.iso.lnI(v), ps.iso.lnG(v)
		if iso != nil {
			lnI, lnG = iso[0], iso[1]
		}
		X, N, _, _ = closedForm(pr.Shape.Kappa(), lnI, lnG, d)
		return X, N
	}
	m := pr.run(v, iso, seg, dur)
	return m.extended(pr.Shape.Kappa()), m.N
}

func (pr *Prepared) mustMatch(p Params) {
	mode := p.Mode
	if mode == "" {
		mode = Continuous
	}
	if p.P0 != pr.P0 || p.Shape.Kappa() != pr.Shape.Kappa() || mode != pr.Mode {
		panic(fmt.Sprintf("kinetics: Prepared for p0 %g Pa, %s, %s evaluated with p0 %g Pa, %s, %s", pr.P0, pr.Shape, pr.Mode, p.P0, p.Shape, mode))
	}
}

// run integrates the carbon segments. iso, when not nil, overrides ln I and
// ln G of the constant-temperature growing segments (2 per segment, in
// order). When seg ≥ 0 the segment with that Profile index runs for dur
// seconds instead of its own duration.
func (pr *Prepared) run(v *fitVec, iso []float64, seg int, dur float64) moments {
	kappa := pr.Shape.Kappa()
	site := pr.Mode == SiteSaturated
	N0 := math.Exp(v[fitLnN0])
	var m moments
	seeded := false
	k := 0
	for i := range pr.segs {
		ps := &pr.segs[i]
		d := ps.duration
		if ps.seg == seg {
			d = dur
		}
		if !ps.ramp {
			if ps.iso.etch {
				continue
			}
			var I, G float64
			if iso != nil {
				I, G = math.Exp(iso[2*k]), math.Exp(iso[2*k+1])
			} else {
				I, G = ps.iso.rates(v)
			}
			k++
			if site {
				if !seeded && G > 0 {
					m.seed(kappa, N0)
					seeded = true
				}
				I = 0
			}
			m = constantStep(m, kappa, I, G, d, pr.Options.Panels)
			continue
		}
		rate := func(c conditions) (float64, float64) {
			I, G := c.rates(v)
			if site {
				I = 0
			}
			return I, G
		}
		ia, ga := rate(ps.nodes[0])
		for j := 0; j < ps.n; j++ {
			ib, gb := rate(ps.nodes[2*j+1])
			ic, gc := rate(ps.nodes[2*j+2])
			if site && !seeded && (ga > 0 || gb > 0) {
				m.seed(kappa, N0)
				seeded = true
			}
			m = rk4(m, kappa, ps.h, ia, ga, ib, gb, ic, gc)
			ia, ga = ic, gc
		}
	}
	return m
}

// isoChannels returns ln I and ln G of each constant-temperature growing
// segment, and their gradients with respect to v.
func (pr *Prepared) isoChannels(v *fitVec, ch []float64) []float64 {
	ch = ch[:0]
	for _, ps := range pr.segs {
		if !ps.ramp && !ps.iso.etch {
			ch = append(ch, ps.iso.lnI(v), ps.iso.lnG(v))
		}
	}
	return ch
}

// channelGrad adds d·∂(channel c)/∂v to g.
func (pr *Prepared) channelGrad(c int, d float64, g *fitVec) {
	k := 0
	for _, ps := range pr.segs {
		if ps.ramp || ps.iso.etch {
			continue
		}
		if k == c/2 {
			if c%2 == 0 {
				g[fitLnI0] += d
				g[fitEn] -= d * ps.iso.u
				g[fitA] += d * ps.iso.lpc
				g[fitB] -= d * ps.iso.lph
			} else {
				g[fitLnG0] += d
				g[fitEg] -= d * ps.iso.u
			}
			return
		}
		k++
	}
}

// FitStatus says how a fit ended.
type FitStatus string

// Fit statuses. Only Converged means the estimates are a minimum to the
// tolerances; the others still return the best point reached.
const (
	Converged      FitStatus = "converged"
	IterationLimit FitStatus = "iteration limit reached"
	Stalled        FitStatus = "stalled: no step lowers the residual sum of squares"
)

// Observation is one run's measurements for a fit.
type Observation struct {
	Label    string    // run code, for residuals and messages
	Prepared *Prepared // the run's profile, prepared with the fit's start parameters
	// Coverage is the measured θ in [0, 1]; NaN when not measured.
	Coverage float64
	// NucleiDensity is the measured nuclei density, 1/m², > 0; NaN when
	// not measured.
	NucleiDensity float64
}

// DefaultCoverageEpsilon is ε, the clip of measured and predicted coverage
// to [ε, 1 − ε] before the complementary log-log transform: a micrograph
// that reads "fully covered" says little more than θ ≥ 0.999 (a model
// choice).
const DefaultCoverageEpsilon = 1e-3

// FitSettings tunes Fit. The zero value fits every free parameter of the
// start's mode to both metrics, with default bounds.
type FitSettings struct {
	// Coverage and Density choose the metrics fitted; both false means
	// both. A run contributes a residual for each chosen metric it has.
	Coverage, Density bool
	// Fixed holds parameters at SI values (eV for energies), by file key
	// (see ParseFix). In continuous mode site_density is always fixed, in
	// site-saturated mode the four nucleation parameters are.
	Fixed map[string]float64
	// Bounds overrides the default bounds by file key, [lo, hi] in SI
	// units (prefactors as SI values, not logarithms). Defaults: energies
	// −10 to 10 eV, orders −5 to 10, prefactors 1e-300 to 1e300.
	Bounds map[string][2]float64
	// CoverageScale and DensityScale are σ of the coverage residual (on
	// the complementary log-log scale) and of ln N. Zero: when both
	// metrics are fitted, each is estimated as the RMS of its residuals
	// after a first unweighted fit and the fit is repeated (two-stage
	// weighted least squares); with one metric σ = 1 (it does not change
	// the estimates, and s² absorbs it).
	CoverageScale, DensityScale float64
	// Epsilon is the coverage clip ε, default DefaultCoverageEpsilon,
	// within (0, 0.1).
	Epsilon float64
	// MaxIterations bounds the Levenberg–Marquardt iterations, default 200.
	MaxIterations int
	// Workers evaluating runs in parallel, default runtime.GOMAXPROCS(0).
	Workers int
	// Progress, when not nil, is called after each iteration.
	Progress func(iteration int, rss float64)
}

// Estimate is one parameter of a fit.
type Estimate struct {
	FitParameter
	Value float64 // SI value (eV for energies)
	SE    float64 // standard error in the same unit (delta method for prefactors); NaN when not identified; 0 when fixed
	// LogValue and LogSE are ln(Value) and its standard error for
	// log-scaled parameters (the fit's own coordinates).
	LogValue, LogSE float64
	Fixed           bool
	AtBound         bool // the estimate sits on a bound
}

// Residual is one measured value against its prediction.
type Residual struct {
	Label     string
	Metric    string  // "coverage" or "nuclei_density"
	Measured  float64 // θ or 1/m²
	Predicted float64 // θ or 1/m²
	// Raw is the difference on the fit's scale (cloglog θ or ln N),
	// measured − predicted; Weighted is Raw/σ.
	Raw, Weighted float64
}

// FitResult is the outcome of Fit.
type FitResult struct {
	Params    Params     // start parameters with the estimates, covariance and Source set
	Estimates []Estimate // every parameter of the mode, in FitParameters order
	// Free names the free parameters (file keys); Correlation is their
	// correlation matrix (NaN rows for unidentified ones).
	Free        []string
	Correlation [][]float64
	// NucleationCorrelation is corr(En, ln I0) and GrowthCorrelation
	// corr(Eg, ln G0); NaN unless both of the pair are free.
	NucleationCorrelation, GrowthCorrelation float64
	Residuals                                []Residual // worst (largest |Weighted|) first
	RSS                                      float64    // Σ Weighted²
	ReducedChiSq                             float64    // RSS/(N − P)
	N, P                                     int        // residuals and free parameters
	Runs                                     int        // runs that contributed
	CoverageScale, DensityScale              float64    // σ used
	Condition                                float64    // condition number of the scaled JᵀJ
	Status                                   FitStatus
	Iterations, Evaluations                  int
	Warnings                                 []string
}

// Fit estimates the model parameters from measured runs by weighted
// nonlinear least squares. The residuals are
//
//	coverage:  [cloglog(θm) − cloglog(θp)]/σc,  cloglog θ = ln(−ln(1 − θ)) = ln X
//	density:   [ln Nm − ln Np]/σN
//
// with θ clipped to [ε, 1 − ε] (equivalently X to [−ln(1−ε), −ln ε]); the
// complementary log-log scale is linear in ln t, ln I and ln G for JMAK
// growth (ln X = ln(κ/3) + ln I + 2 ln G + 3 ln t at constant conditions)
// and stays finite near 0 and 1. The prefactors are fitted as logarithms.
//
// The minimiser is Levenberg–Marquardt with Marquardt's diagonal scaling
// and Nielsen's damping update, steps projected onto the bounds, written on
// gonum/mat; the Jacobian is by forward differences on ln I and ln G of each
// constant-temperature carbon step (chained analytically to the
// parameters) and directly on the parameters for ramps with methane. The
// covariance is s²·(JᵀJ)⁻¹ with s² = RSS/(N − P), from an eigen-
// decomposition of JᵀJ scaled to unit diagonal; eigenvalues below 1e-10 of
// the largest mark combinations the data do not identify: a warning names
// them, their standard errors are NaN and no covariance is stored.
//
// Errors (wrapping ErrFitInput): no observation with a chosen metric, no
// more residuals than free parameters, every run at one temperature while
// an activation energy is free, a Fixed or Bounds key that is not a
// parameter, a measurement out of range. Not converging is a Status, not
// an error. It panics if an observation has no Prepared.
//
// References:
//
//   - K. Levenberg, "A method for the solution of certain non-linear
//     problems in least squares", Q. Appl. Math. 2, 164 (1944).
//   - D. W. Marquardt, "An algorithm for least-squares estimation of
//     nonlinear parameters", J. SIAM 11, 431 (1963).
//   - H. B. Nielsen, "Damping parameter in Marquardt's method", IMM-REP-
//     1999-05, Technical University of Denmark (1999).
//   - G. A. F. Seber, C. J. Wild, Nonlinear Regression, Wiley (1989),
//     ch. 2 (covariance s²(JᵀJ)⁻¹).
//
// (Volume and page numbers from memory.)
func Fit(obs []Observation, start Params, s FitSettings) (*FitResult, error) {
	if err := start.Validate(); err != nil {
		return nil, err
	}
	if !s.Coverage && !s.Density {
		s.Coverage, s.Density = true, true
	}
	if s.Epsilon == 0 {
		s.Epsilon = DefaultCoverageEpsilon
	}
	if !(s.Epsilon > 0 && s.Epsilon < 0.1) {
		return nil, fitErr("coverage clip ε %g is outside (0, 0.1)", s.Epsilon)
	}
	if s.MaxIterations <= 0 {
		s.MaxIterations = 200
	}
	if s.Workers <= 0 {
		s.Workers = runtime.GOMAXPROCS(0)
	}
	mode := start.Mode
	if mode == "" {
		mode = Continuous
	}
	f := &fitter{s: s, start: start, mode: mode, xlo: -math.Log1p(-s.Epsilon), xhi: -math.Log(s.Epsilon)}
	// Free parameters and bounds.
	fixed := [nFit]bool{}
	if mode == SiteSaturated {
		fixed[fitEn], fixed[fitLnI0], fixed[fitA], fixed[fitB] = true, true, true, true
	} else {
		fixed[fitLnN0] = true
	}
	f.v0 = vecOf(start)
	for key, val := range s.Fixed {
		i := fitIndex(key)
		if i < 0 {
			return nil, fitErr("cannot fix unknown parameter %q, want one of %s", key, knownFitNames())
		}
		if FitParameters[i].Log {
			if !(val > 0) {
				return nil, fitErr("fixed %s %g must be greater than zero", FitParameters[i].Key, val)
			}
			val = math.Log(val)
		}
		if math.IsNaN(val) || math.IsInf(val, 0) {
			return nil, fitErr("fixed %s is not a finite number", FitParameters[i].Key)
		}
		fixed[i] = true
		f.v0[i] = val
	}
	for i := range nFit {
		lo, hi := -10.0, 10.0
		switch i {
		case fitA, fitB:
			lo, hi = -5, 10
		case fitLnI0, fitLnG0, fitLnN0:
			lo, hi = math.Log(1e-300), math.Log(1e300)
		}
		f.lo[i], f.hi[i] = lo, hi
	}
	for key, b := range s.Bounds {
		i := fitIndex(key)
		if i < 0 {
			return nil, fitErr("bounds for unknown parameter %q, want one of %s", key, knownFitNames())
		}
		lo, hi := b[0], b[1]
		if FitParameters[i].Log {
			lo, hi = math.Log(lo), math.Log(hi)
		}
		if !(lo < hi) {
			return nil, fitErr("bounds of %s: lower %g is not below upper %g", FitParameters[i].Key, b[0], b[1])
		}
		f.lo[i], f.hi[i] = lo, hi
	}
	for i := range nFit {
		if !fixed[i] {
			f.free = append(f.free, i)
			f.v0[i] = math.Min(math.Max(f.v0[i], f.lo[i]), f.hi[i])
		}
	}
	// Rows.
	for k, o := range obs {
		if o.Prepared == nil {
			panic("kinetics: Fit observation " + o.Label + " has no Prepared profile")
		}
		if !o.Prepared.HasCarbon() {
			f.warn("run %s: no step with methane; left out", o.Label)
			continue
		}
		used := false
		if s.Coverage && !math.IsNaN(o.Coverage) {
			if o.Coverage < 0 || o.Coverage > 1 {
				return nil, fitErr("run %s: coverage %g is outside 0 to 1", o.Label, o.Coverage)
			}
			f.rows = append(f.rows, fitRow{obs: k, density: false, y: f.cloglog(o.Coverage)})
			used = true
		}
		if s.Density && !math.IsNaN(o.NucleiDensity) {
			if !(o.NucleiDensity > 0) || math.IsInf(o.NucleiDensity, 0) {
				return nil, fitErr("run %s: nuclei density %g /m² must be a finite number above zero", o.Label, o.NucleiDensity)
			}
			f.rows = append(f.rows, fitRow{obs: k, density: true, y: math.Log(o.NucleiDensity)})
			used = true
		}
		if used {
			f.obs = append(f.obs, k)
		}
	}
	f.all = obs
	f.idx = f.rowIndex()
	n, p := len(f.rows), len(f.free)
	metrics := []string{}
	if s.Coverage {
		metrics = append(metrics, "coverage")
	}
	if s.Density {
		metrics = append(metrics, "nuclei density")
	}
	if len(f.obs) == 0 {
		return nil, fitErr("no run has a measured %s", strings.Join(metrics, " or "))
	}
	if p == 0 {
		return nil, fitErr("every parameter is fixed; nothing to fit")
	}
	if n <= p {
		return nil, fitErr("%d measurements from %d runs for %d free parameters: need more measurements than free parameters", n, len(f.obs), p)
	}
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, k := range f.obs {
		a, b := obs[k].Prepared.CarbonTemperatures()
		lo, hi = math.Min(lo, a), math.Max(hi, b)
	}
	if hi-lo < 1 && (!fixed[fitEg] || !fixed[fitEn] && mode == Continuous) {
		return nil, fitErr("all %d runs grow at %.1f °C: the activation energies cannot be estimated from one temperature; fix them (e.g. --fix En=%g --fix Eg=%g) or add runs at other temperatures",
			len(f.obs), lo-273.15, start.En, start.Eg)
	}
	if len(f.obs) < 2*p {
		f.warn("only %d runs for %d free parameters: expect wide standard errors", len(f.obs), p)
	}
	f.sc, f.sd = s.CoverageScale, s.DensityScale
	twoStage := false
	if f.sc <= 0 || f.sd <= 0 {
		nc, nd := 0, 0
		for _, r := range f.rows {
			if r.density {
				nd++
			} else {
				nc++
			}
		}
		twoStage = nc > 0 && nd > 0
		if f.sc <= 0 {
			f.sc = 1
		}
		if f.sd <= 0 {
			f.sd = 1
		}
	}
	x := make([]float64, p)
	for j, i := range f.free {
		x[j] = f.v0[i]
	}
	x = f.minimize(x)
	if twoStage {
		var sc, sd float64
		var nc, nd int
		r := make([]float64, n)
		f.residuals(x, r)
		for k, row := range f.rows {
			if row.density {
				sd += sq(r[k] * f.sd)
				nd++
			} else {
				sc += sq(r[k] * f.sc)
				nc++
			}
		}
		if s.CoverageScale <= 0 {
			f.sc = math.Max(math.Sqrt(sc/float64(nc)), 1e-6)
		}
		if s.DensityScale <= 0 {
			f.sd = math.Max(math.Sqrt(sd/float64(nd)), 1e-6)
		}
		x = f.minimize(x)
	}
	return f.result(x), nil
}

func sq(x float64) float64 { return x * x }

type fitRow struct {
	obs     int
	density bool
	y       float64 // measured value on the fit scale
}

type fitter struct {
	s        FitSettings
	start    Params
	mode     Mode
	v0       fitVec
	lo, hi   fitVec
	free     []int
	all      []Observation
	obs      []int // indexes of used observations
	rows     []fitRow
	sc, sd   float64
	xlo, xhi float64
	warnings []string
	status   FitStatus
	iters    int
	evals    int
	jac      *mat.Dense
	idx      [][2]int // rows of each used observation
}

func (f *fitter) warn(format string, args ...any) {
	f.warnings = append(f.warnings, fmt.Sprintf(format, args...))
}

// cloglog returns ln X of a coverage clipped to [ε, 1 − ε].
func (f *fitter) cloglog(theta float64) float64 {
	return f.clogX(-math.Log1p(-math.Min(theta, 1-f.s.Epsilon)))
}

func (f *fitter) clogX(X float64) float64 { return math.Log(math.Min(math.Max(X, f.xlo), f.xhi)) }

func (f *fitter) vec(x []float64) fitVec {
	v := f.v0
	for j, i := range f.free {
		v[i] = x[j]
	}
	return v
}

// outputs returns cloglog θ and ln N of a prepared run.
func (f *fitter) outputs(pr *Prepared, v *fitVec, iso []float64) (c, lnN float64) {
	X, N := pr.final(v, iso, -1, math.NaN())
	return f.clogX(X), math.Log(math.Max(N, 1))
}

// parallel calls fn(k) for every used observation index position k.
func (f *fitter) parallel(fn func(k int)) {
	n := len(f.obs)
	w := f.s.Workers
	if n < 64 || w <= 1 {
		for k := range n {
			fn(k)
		}
		return
	}
	var wg sync.WaitGroup
	chunk := (n + w - 1) / w
	for lo := 0; lo < n; lo += chunk {
		hi := min(lo+chunk, n)
		wg.Add(1)
		go func() {
			defer wg.Done()
			for k := lo; k < hi; k++ {
				fn(k)
			}
		}()
	}
	wg.Wait()
}

// rowIndex returns the row indexes of each used observation (at most two).
func (f *fitter) rowIndex() [][2]int {
	idx := make([][2]int, len(f.obs))
	pos := map[int]int{}
	for k, o := range f.obs {
		pos[o] = k
		idx[k] = [2]int{-1, -1}
	}
	for r, row := range f.rows {
		k := pos[row.obs]
		if row.density {
			idx[k][1] = r
		} else {
			idx[k][0] = r
		}
	}
	return idx
}

func (f *fitter) residuals(x, r []float64) {
	v := f.vec(x)
	idx := f.idx
	f.parallel(func(k int) {
		c, lnN := f.outputs(f.all[f.obs[k]].Prepared, &v, nil)
		if i := idx[k][0]; i >= 0 {
			r[i] = (f.rows[i].y - c) / f.sc
		}
		if i := idx[k][1]; i >= 0 {
			r[i] = (f.rows[i].y - lnN) / f.sd
		}
	})
	f.evals++
}

// jacobian fills J (rows × free) with ∂r/∂x.
func (f *fitter) jacobian(x []float64, J *mat.Dense) {
	v := f.vec(x)
	idx := f.idx
	const h = 1e-6
	f.parallel(func(k int) {
		pr := f.all[f.obs[k]].Prepared
		var gc, gn fitVec // ∂(cloglog θ)/∂v, ∂(ln N)/∂v
		if pr.closed() {
			f.closedGrad(pr, &v, &gc, &gn)
			f.setRows(J, idx[k], &gc, &gn)
			return
		}
		ch := pr.isoChannels(&v, make([]float64, 0, 2*pr.nIso))
		c0, n0 := f.outputs(pr, &v, ch)
		for c := range ch {
			save := ch[c]
			ch[c] += h
			c1, n1 := f.outputs(pr, &v, ch)
			ch[c] = save
			pr.channelGrad(c, (c1-c0)/h, &gc)
			pr.channelGrad(c, (n1-n0)/h, &gn)
		}
		// Parameters that reach the model other than through the
		// constant-temperature channels: all of them on ramps, N0 always.
		ramps := pr.nIso < len(pr.segs)
		for _, i := range f.free {
			if !ramps && i != fitLnN0 {
				continue
			}
			w := v
			w[i] += h
			c1, n1 := f.outputs(pr, &w, ch)
			gc[i] += (c1 - c0) / h
			gn[i] += (n1 - n0) / h
		}
		f.setRows(J, idx[k], &gc, &gn)
	})
	f.evals++
}

// setRows writes one run's gradients into its Jacobian rows.
func (f *fitter) setRows(J *mat.Dense, rows [2]int, gc, gn *fitVec) {
	for j, i := range f.free {
		if r := rows[0]; r >= 0 {
			J.Set(r, j, -gc[i]/f.sc)
		}
		if r := rows[1]; r >= 0 {
			J.Set(r, j, -gn[i]/f.sd)
		}
	}
}

// closedGrad gives the analytic gradients of cloglog θ and ln N for a
// closed-form run (see closedForm): ∂ln X/∂ln I = 1, ∂ln X/∂ln G = 2 inside
// the clip, 0 outside.
func (f *fitter) closedGrad(pr *Prepared, v *fitVec, gc, gn *fitVec) {
	ps := &pr.segs[0]
	if ps.iso.etch {
		return
	}
	X, N, dI, dG := closedForm(pr.Shape.Kappa(), ps.iso.lnI(v), ps.iso.lnG(v), ps.duration)
	cI, cG := 1.0, 2.0
	if X <= f.xlo || X >= f.xhi {
		cI, cG = 0, 0
	}
	if N <= 1 {
		dI, dG = 0, 0
	}
	pr.channelGrad(0, cI, gc)
	pr.channelGrad(1, cG, gc)
	pr.channelGrad(0, dI, gn)
	pr.channelGrad(1, dG, gn)
}

func (f *fitter) clamp(x []float64) {
	for j, i := range f.free {
		x[j] = math.Min(math.Max(x[j], f.lo[i]), f.hi[i])
	}
}

func dot(a, b []float64) float64 {
	s := 0.0
	for i := range a {
		s += a[i] * b[i]
	}
	return s
}

// minimize runs Levenberg–Marquardt from x and returns the best point.
func (f *fitter) minimize(x []float64) []float64 {
	n, p := len(f.rows), len(x)
	x = append([]float64(nil), x...)
	f.clamp(x)
	r := make([]float64, n)
	rn := make([]float64, n)
	f.residuals(x, r)
	cost := dot(r, r) / 2
	J := mat.NewDense(n, p, nil)
	f.jacobian(x, J)
	var A mat.SymDense
	g := mat.NewVecDense(p, nil)
	A.SymOuterK(1, J.T())
	lambda := 0.0
	for j := range p {
		lambda = math.Max(lambda, A.At(j, j))
	}
	lambda *= 1e-3
	nu := 2.0
	f.status = IterationLimit
	xn := make([]float64, p)
	for it := 1; it <= f.s.MaxIterations; it++ {
		f.iters++
		A.SymOuterK(1, J.T())
		g.MulVec(J.T(), mat.NewVecDense(n, r))
		gmax := 0.0
		for j := range p {
			gmax = math.Max(gmax, math.Abs(g.AtVec(j)))
		}
		if gmax <= 1e-12*(1+cost) {
			f.status = Converged
			break
		}
		accepted := false
		for try := 0; try < 40; try++ {
			M := mat.NewSymDense(p, nil)
			M.CopySym(&A)
			for j := range p {
				d := math.Max(A.At(j, j), 1e-12)
				M.SetSym(j, j, A.At(j, j)+lambda*d)
			}
			var ch mat.Cholesky
			var step mat.VecDense
			if ch.Factorize(M) {
				if err := ch.SolveVecTo(&step, g); err != nil {
					lambda *= nu
					nu *= 2
					continue
				}
			} else {
				lambda *= nu
				nu *= 2
				continue
			}
			for j := range p {
				xn[j] = x[j] - step.AtVec(j)
			}
			f.clamp(xn)
			f.residuals(xn, rn)
			costn := dot(rn, rn) / 2
			// Predicted reduction of the linear model for the actual step.
			var d mat.VecDense
			dx := make([]float64, p)
			for j := range p {
				dx[j] = xn[j] - x[j]
			}
			d.MulVec(J, mat.NewVecDense(p, dx))
			pred := 0.0
			for i := range n {
				pred += sq(r[i]) - sq(r[i]+d.AtVec(i))
			}
			pred /= 2
			if costn < cost && !math.IsNaN(costn) {
				rho := (cost - costn) / math.Max(pred, 1e-300)
				lambda *= math.Max(1.0/3, 1-math.Pow(2*rho-1, 3))
				nu = 2
				small := 0.0
				size := 0.0
				for j := range p {
					small += sq(dx[j])
					size += sq(x[j])
				}
				relDrop := (cost-costn) <= 1e-12*cost || costn <= 1e-300
				copy(x, xn)
				r, rn = rn, r
				cost = costn
				accepted = true
				if math.Sqrt(small) <= 1e-10*(math.Sqrt(size)+1e-10) || relDrop {
					f.status = Converged
				}
				break
			}
			lambda *= nu
			nu *= 2
			if lambda > 1e300 {
				break
			}
		}
		if !accepted {
			// No step helps: at a minimum to working precision if the
			// gradient is small relative to the curvature, else stalled.
			f.status = Stalled
			if gmax <= 1e-6*(1+cost) {
				f.status = Converged
			}
			break
		}
		f.jacobian(x, J)
		if f.s.Progress != nil {
			f.s.Progress(f.iters, 2*cost)
		}
		if f.status == Converged {
			break
		}
	}
	f.jac = J
	return x
}

func (f *fitter) result(x []float64) *FitResult {
	n, p := len(f.rows), len(x)
	v := f.vec(x)
	res := &FitResult{N: n, P: p, Runs: len(f.obs), CoverageScale: f.sc, DensityScale: f.sd,
		Status: f.status, Iterations: f.iters, Evaluations: f.evals,
		NucleationCorrelation: math.NaN(), GrowthCorrelation: math.NaN()}
	r := make([]float64, n)
	f.residuals(x, r)
	res.RSS = dot(r, r)
	res.ReducedChiSq = res.RSS / float64(n-p)
	s2 := res.ReducedChiSq
	// Covariance from the eigen-decomposition of JᵀJ scaled to unit
	// diagonal.
	var A mat.SymDense
	A.SymOuterK(1, f.jac.T())
	scale := make([]float64, p)
	S := mat.NewSymDense(p, nil)
	for j := range p {
		scale[j] = math.Sqrt(A.At(j, j))
		if scale[j] == 0 {
			scale[j] = 1
		}
	}
	for i := range p {
		for j := i; j < p; j++ {
			S.SetSym(i, j, A.At(i, j)/(scale[i]*scale[j]))
		}
	}
	var eig mat.EigenSym
	cov := mat.NewDense(p, p, nil)
	unidentified := make([]bool, p)
	singular := false
	if eig.Factorize(S, true) {
		vals := eig.Values(nil)
		var vecs mat.Dense
		eig.VectorsTo(&vecs)
		lmax := vals[len(vals)-1]
		lmin := vals[0]
		res.Condition = lmax / math.Max(lmin, 1e-300)
		for k, l := range vals {
			if l > 1e-10*lmax {
				for i := range p {
					for j := range p {
						cov.Set(i, j, cov.At(i, j)+vecs.At(i, k)*vecs.At(j, k)/l)
					}
				}
				continue
			}
			singular = true
			var names []string
			for i := range p {
				if math.Abs(vecs.At(i, k)) > 0.1 {
					unidentified[i] = true
					names = append(names, FitParameters[f.free[i]].Short)
				}
			}
			f.warn("the data cannot identify %s separately (JᵀJ is singular, condition %.3g): fix some of them with --fix or add runs that vary temperature, pressures and time", strings.Join(names, ", "), res.Condition)
		}
		if !singular && res.Condition > 1e8 {
			f.warn("JᵀJ is badly conditioned (condition %.3g): the estimates are strongly correlated and the standard errors large", res.Condition)
		}
	} else {
		singular = true
		for i := range unidentified {
			unidentified[i] = true
		}
		f.warn("the covariance could not be computed (eigen-decomposition failed)")
	}
	for i := range p {
		for j := range p {
			c := s2 * cov.At(i, j) / (scale[i] * scale[j])
			if unidentified[i] || unidentified[j] {
				c = math.NaN()
			}
			cov.Set(i, j, c)
		}
	}
	res.Params = v.apply(f.start)
	free := map[int]int{}
	for j, i := range f.free {
		free[i] = j
		res.Free = append(res.Free, FitParameters[i].Key)
	}
	res.Correlation = make([][]float64, p)
	for i := range p {
		res.Correlation[i] = make([]float64, p)
		for j := range p {
			res.Correlation[i][j] = cov.At(i, j) / math.Sqrt(cov.At(i, i)*cov.At(j, j))
		}
	}
	corr := func(a, b int) float64 {
		ja, oka := free[a]
		jb, okb := free[b]
		if !oka || !okb {
			return math.NaN()
		}
		return res.Correlation[ja][jb]
	}
	res.NucleationCorrelation, res.GrowthCorrelation = corr(fitEn, fitLnI0), corr(fitEg, fitLnG0)
	for i := range nFit {
		if f.mode == Continuous && i == fitLnN0 || f.mode == SiteSaturated && i <= fitB {
			continue
		}
		e := Estimate{FitParameter: FitParameters[i], Value: siValue(res.Params, i), Fixed: true, LogValue: math.NaN(), LogSE: math.NaN()}
		if e.Log {
			e.LogValue = v[i]
			e.LogSE = 0
		}
		if j, ok := free[i]; ok {
			e.Fixed = false
			se := math.Sqrt(cov.At(j, j))
			e.SE = se
			if e.Log {
				e.LogSE = se
				e.SE = e.Value * se
			}
			e.AtBound = v[i] <= f.lo[i]+1e-12*math.Abs(f.lo[i]) || v[i] >= f.hi[i]-1e-12*math.Abs(f.hi[i])
			if e.AtBound {
				f.warn("%s ended on its bound (%g): the estimate and its standard error are not reliable", e.Key, e.Value)
			}
		}
		res.Estimates = append(res.Estimates, e)
	}
	if !singular {
		c := &Covariance{Names: res.Free, Matrix: make([][]float64, p)}
		// The file stores the covariance in SI units of the values
		// (delta method for the log-scaled prefactors); see
		// Params.logCovariance for the way back.
		for i := range p {
			c.Matrix[i] = make([]float64, p)
			for j := range p {
				x := cov.At(i, j)
				if FitParameters[f.free[i]].Log {
					x *= siValue(res.Params, f.free[i])
				}
				if FitParameters[f.free[j]].Log {
					x *= siValue(res.Params, f.free[j])
				}
				c.Matrix[i][j] = x
			}
		}
		for i := range p {
			for j := range i {
				c.Matrix[i][j] = c.Matrix[j][i]
			}
		}
		res.Params.Covariance = c
	} else {
		res.Params.Covariance = nil
	}
	res.Params.Runs = len(f.obs)
	res.Params.Source = fmt.Sprintf("fit of %d runs (%d measurements, %d free parameters), %s", len(f.obs), n, p, f.status)
	// Residuals, worst first.
	for k, row := range f.rows {
		o := f.all[row.obs]
		theta, N := o.Prepared.Evaluate(res.Params)
		rr := Residual{Label: o.Label, Weighted: r[k]}
		if row.density {
			rr.Metric, rr.Measured, rr.Predicted, rr.Raw = "nuclei_density", o.NucleiDensity, N, r[k]*f.sd
		} else {
			rr.Metric, rr.Measured, rr.Predicted, rr.Raw = "coverage", o.Coverage, theta, r[k]*f.sc
		}
		res.Residuals = append(res.Residuals, rr)
	}
	sort.SliceStable(res.Residuals, func(i, j int) bool {
		return math.Abs(res.Residuals[i].Weighted) > math.Abs(res.Residuals[j].Weighted)
	})
	if f.status != Converged {
		f.warn("the fit did not converge (%s after %d iterations); the estimates are the best point reached", f.status, f.iters)
	}
	res.Warnings = f.warnings
	return res
}
