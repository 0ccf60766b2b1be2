package kinetics

import (
	"fmt"
	"math"
	"runtime"
	"slices"
	"strings"

	"github.com/foilrun/foilrun/recipe"
)

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
	// Bounds overrides the start's Bounds (recorded in its params file by
	// an earlier fit), which override DefaultBounds, by file key,
	// [lo, hi] in the file's units (eV for energies, prefactors as SI
	// values, not logarithms).
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
	// RefValue and RefLogSE, for prefactors, are the rate referred to
	// the reference temperature, I0·exp(−En/(k·T_ref)) or
	// G0·exp(−Eg/(k·T_ref)), and the standard error of its logarithm
	// (exp(RefLogSE) is its ×/÷ factor); NaN otherwise.
	RefValue, RefLogSE float64
	Fixed              bool
	// Identifiable is false for a parameter the fitted metrics cannot
	// separate from another (see Combined); Value is then only the start
	// value it was held at, and SE is NaN.
	Identifiable bool
	AtBound      bool // the estimate sits on a bound
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
	// ReferenceTemperature is T_ref, K: the median growth temperature of
	// the runs, to which the prefactors are referred.
	ReferenceTemperature float64
	// Combined are the combinations estimated in place of parameters the
	// metrics cannot separate (coverage only): En+2Eg and I·G²·κ at
	// T_ref in continuous mode, 2Eg and N0·G²·κ at T_ref site-saturated.
	Combined                    []Combined
	CoverageScale, DensityScale float64 // σ used
	Condition                   float64 // condition number of the scaled JᵀJ
	Status                      FitStatus
	Iterations, Evaluations     int
	Warnings                    []string
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
// and Nielsen's damping update, steps projected onto the bounds (package
// kinetics/internal/lm); the Jacobian is by forward differences on ln I and ln G of each
// constant-temperature carbon step (chained analytically to the
// parameters) and directly on the parameters for ramps with methane. The
// covariance is s²·(JᵀJ)⁻¹ with s² = RSS/(N − P), from an eigen-
// decomposition of JᵀJ scaled to unit diagonal; eigenvalues below 1e-10 of
// the largest mark combinations the data do not identify: a warning names
// them, their standard errors are NaN and no covariance is stored.
//
// Errors (*InputError of kind KindFit or KindFix, wrapping ErrFitInput;
// ReasonOneTemperature for the one-temperature case): no observation with a chosen metric, no
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
	f, err := newFitter(start, s)
	if err != nil {
		return nil, err
	}
	if err := f.addRows(obs); err != nil {
		return nil, err
	}
	if err := f.identifiable(); err != nil {
		return nil, err
	}
	f.checkStart()
	return f.solve(), nil
}

// newFitter fills the settings' defaults and sets the free parameters,
// their start and their bounds.
func newFitter(start Params, s FitSettings) (*fitter, error) {
	if !s.Coverage && !s.Density {
		s.Coverage, s.Density = true, true
	}
	if s.Epsilon == 0 {
		s.Epsilon = DefaultCoverageEpsilon
	}
	if !(s.Epsilon > 0 && s.Epsilon < 0.1) {
		return nil, inputErr(KindFit, "fit: coverage clip ε %g is outside (0, 0.1)", s.Epsilon)
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
	if mode == SiteSaturated {
		f.fixed[fitEn], f.fixed[fitLnI0], f.fixed[fitA], f.fixed[fitB] = true, true, true, true
	} else {
		f.fixed[fitLnN0] = true
	}
	f.v0 = vecOf(start)
	if err := f.fix(s.Fixed); err != nil {
		return nil, err
	}
	if err := f.bound(s.Bounds); err != nil {
		return nil, err
	}
	for i := range nFit {
		if !f.fixed[i] {
			f.free = append(f.free, i)
			f.v0[i] = math.Min(math.Max(f.v0[i], f.lo[i]), f.hi[i])
		}
	}
	return f, nil
}

// fix holds parameters at the given values (file keys, file units).
func (f *fitter) fix(fixed map[string]float64) error {
	for key, val := range fixed {
		i := fitIndex(key)
		if i < 0 {
			return inputErr(KindFix, "fit: cannot fix unknown parameter %q, want one of %s", key, knownFitNames()).because(ReasonUnknownName)
		}
		if FitParameters[i].Log {
			if !(val > 0) {
				return inputErr(KindFix, "fit: fixed %s %g must be greater than zero", FitParameters[i].Key, val)
			}
			val = math.Log(val)
		}
		if math.IsNaN(val) || math.IsInf(val, 0) {
			return inputErr(KindFix, "fit: fixed %s is not a finite number", FitParameters[i].Key)
		}
		f.fixed[i] = true
		f.v0[i] = val
	}
	return nil
}

// bound sets the bounds: DefaultBounds, then the start's (the bounds its
// params file recorded), then the caller's, each overriding the one
// before; f.bounds keeps them in file units for the result.
func (f *fitter) bound(bounds map[string][2]float64) error {
	f.bounds = map[string][2]float64{}
	for i := range nFit {
		b := DefaultBounds[FitParameters[i].Key]
		if sb, ok := f.start.Bounds[FitParameters[i].Key]; ok {
			b = sb
		}
		f.bounds[FitParameters[i].Key] = b
		f.lo[i], f.hi[i] = b[0], b[1]
		if FitParameters[i].Log {
			f.lo[i], f.hi[i] = math.Log(b[0]), math.Log(b[1])
		}
	}
	for key, b := range bounds {
		i := fitIndex(key)
		if i < 0 {
			return inputErr(KindFix, "fit: bounds for unknown parameter %q, want one of %s", key, knownFitNames()).because(ReasonUnknownName)
		}
		lo, hi := b[0], b[1]
		if FitParameters[i].Log {
			lo, hi = math.Log(lo), math.Log(hi)
		}
		if !(lo < hi) {
			return inputErr(KindFix, "fit: bounds of %s: lower %g is not below upper %g", FitParameters[i].Key, b[0], b[1])
		}
		f.lo[i], f.hi[i] = lo, hi
		f.bounds[FitParameters[i].Key] = b
	}
	return nil
}

// usedBounds are the bounds of the free parameters, for the result's
// Params.
func (f *fitter) usedBounds() map[string][2]float64 {
	out := map[string][2]float64{}
	for _, i := range f.free {
		out[FitParameters[i].Key] = f.bounds[FitParameters[i].Key]
	}
	return out
}

// addRows turns the observations into residual rows: one per chosen
// metric each run has measured.
func (f *fitter) addRows(obs []Observation) error {
	s := f.s
	f.rows = slices.Grow(f.rows, 2*len(obs))
	f.obs = slices.Grow(f.obs, len(obs))
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
				return inputErr(KindFit, "fit: run %s: coverage %g is outside 0 to 1", o.Label, o.Coverage)
			}
			f.rows = append(f.rows, fitRow{obs: k, density: false, y: f.cloglog(o.Coverage)})
			used = true
		}
		if s.Density && !math.IsNaN(o.NucleiDensity) {
			if !(o.NucleiDensity > 0) || math.IsInf(o.NucleiDensity, 0) {
				return inputErr(KindFit, "fit: run %s: nuclei density %g /m² must be a finite number above zero", o.Label, o.NucleiDensity)
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
	return nil
}

// identifiable refuses data that cannot estimate the free parameters: no
// measurement, nothing free, no more measurements than free parameters,
// or every run at one temperature while an activation energy is free.
func (f *fitter) identifiable() error {
	metrics := []string{}
	if f.s.Coverage {
		metrics = append(metrics, "coverage")
	}
	if f.s.Density {
		metrics = append(metrics, "nuclei density")
	}
	if len(f.obs) == 0 {
		return inputErr(KindFit, "fit: no run has a measured %s", strings.Join(metrics, " or "))
	}
	if len(f.free) == 0 {
		return inputErr(KindFit, "fit: every parameter is fixed; nothing to fit")
	}
	_, nd := f.rowCounts()
	f.coordinates(nd == 0)
	n, p := len(f.rows), len(f.coords)
	if n <= p {
		return inputErr(KindFit, "fit: %d measurements from %d runs for %d free parameters: need more measurements than free parameters", n, len(f.obs), p)
	}
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, k := range f.obs {
		a, b := f.all[k].Prepared.CarbonTemperatures()
		lo, hi = math.Min(lo, a), math.Max(hi, b)
	}
	if hi-lo < 1 && (!f.fixed[fitEg] || !f.fixed[fitEn] && f.mode == Continuous) {
		return inputErr(KindFit, "fit: all %d runs grow at %.1f °C: the activation energies cannot be estimated from one temperature",
			len(f.obs), recipe.Celsius(lo)).because(ReasonOneTemperature).
			hinted(fmt.Sprintf("hold the energies fixed (e.g. En=%g, Eg=%g) or add runs grown at other temperatures", f.start.En, f.start.Eg))
	}
	if len(f.obs) < 2*p {
		f.warn("only %d runs for %d free parameters: expect wide standard errors", len(f.obs), p)
	}
	return nil
}

// solve minimises, in two stages when both metrics are fitted without
// given scales: first unweighted, then with each metric's σ set to the
// RMS of its residuals.
func (f *fitter) solve() *FitResult {
	s := f.s
	f.sc, f.sd = s.CoverageScale, s.DensityScale
	twoStage := false
	if f.sc <= 0 || f.sd <= 0 {
		nc, nd := f.rowCounts()
		twoStage = nc > 0 && nd > 0
		if f.sc <= 0 {
			f.sc = 1
		}
		if f.sd <= 0 {
			f.sd = 1
		}
	}
	x := f.minimize(f.startPoint())
	if twoStage {
		var sc, sd float64
		nc, nd := f.rowCounts()
		r := make([]float64, len(f.rows))
		f.residuals(r, x)
		for k, row := range f.rows {
			if row.density {
				sd += sq(r[k] * f.sd)
			} else {
				sc += sq(r[k] * f.sc)
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
	return f.result(x)
}

// rowCounts returns the number of coverage and of density rows.
func (f *fitter) rowCounts() (nc, nd int) {
	for _, r := range f.rows {
		if r.density {
			nd++
		} else {
			nc++
		}
	}
	return nc, nd
}
