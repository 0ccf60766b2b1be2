package kinetics

import (
	"fmt"
	"math"
	"math/rand/v2"

	"github.com/foilrun/foilrun/recipe"
)

// MaxDesignRuns is the most runs Design proposes at once.
const MaxDesignRuns = 50

// ReasonRunCount marks a DesignSpec.Runs outside 1 … MaxDesignRuns.
const ReasonRunCount Reason = "run count"

// Default settings of DesignSpec (model choices, see the fields).
const (
	DefaultDesignScale      = 0.3 // σ of cloglog θ and of ln N when no fit gave one
	DefaultDesignCandidates = 600
	DefaultDesignRestarts   = 8
)

// DesignSpec says which runs to propose. Zero fields take their defaults;
// Rand is required.
type DesignSpec struct {
	// Runs is K, the number of runs proposed, 1 … MaxDesignRuns.
	Runs int
	// Vary lists the grow-step parameters the runs may change, with
	// optional ranges, exactly as SuggestSpec.Vary (the same names,
	// defaults and limits); default temperature, CH4, duration.
	Vary []string
	// Density is true when the new runs will measure nuclei density as
	// well as coverage.
	Density bool
	// Params is the current calibration, at which the information is
	// evaluated (its reference pressure, shape and mode are those of the
	// Prepared profiles of Existing).
	Params Params
	// Existing are the runs already logged, with what each measured (NaN:
	// not measured); only which metrics they have is used, not the values.
	Existing []Observation
	// Fixed holds parameters out of the design, as FitSettings.Fixed.
	Fixed map[string]float64
	// CoverageScale and DensityScale are σ of one measurement of cloglog θ
	// and of ln N (see DesignScales), > 0; default DefaultDesignScale.
	CoverageScale, DensityScale float64
	// Candidates is the number of feasible settings sampled at random
	// inside the ranges to choose from, default DefaultDesignCandidates;
	// Restarts the number of exchange searches (the first from a greedy
	// sequential design, the rest from random ones), default
	// DefaultDesignRestarts.
	Candidates, Restarts int
	// Rand draws the candidates and the random starts; the same source in
	// the same state gives the same design. Design panics if it is nil.
	Rand *rand.Rand
	// Options are the numerics of each prediction.
	Options Options
	// MaxMFCShare and MeltMargin limit the space as in SuggestSpec.
	MaxMFCShare, MeltMargin float64
	// Criterion is DesignD (default) or DesignTarget.
	Criterion string
	// Targets are what the recipe Suggest would choose must meet (as
	// SuggestSpec.Targets; the first one's quantity is watched there):
	// required by DesignTarget; with DesignD they only add the target's
	// expected standard errors to the result.
	Targets []Target
}

// DesignRun is one proposed run.
type DesignRun struct {
	Candidate                // settings and predictions at the calibration (Bounds, Margins empty)
	Recipe    *recipe.Recipe // the recipe with the run's grow step
	Changes   []Change       // the edits of the grow step, for rewriting the recipe file
	// CoverageLow and CoverageHigh bound the predicted coverage: the 95 %
	// interval from the information of the existing runs, linearised on
	// the cloglog scale; NaN when they do not identify it.
	CoverageLow, CoverageHigh float64
	// SEWithDensity is the expected standard error of each of
	// DesignResult.DensityNames after the K runs when this run also
	// measures nuclei density (equal to SEDensityBase when it already
	// does).
	SEWithDensity []float64
}

// DesignResult is what Design proposes.
type DesignResult struct {
	Runs []DesignRun
	Step int // index of the grow step changed
	// Names and Units are the coordinates the criterion is on (the fit's:
	// "En", "ln I_ref", …, or "En+2Eg" and "ln(I·G²·κ at T_ref)" when
	// only coverage is measured); SENow and SEAfter their expected
	// standard errors from the existing runs and with the K runs added
	// (NaN: not identified; logarithms' SE is that of the logarithm).
	Names, Units   []string
	SENow, SEAfter []float64
	// DensityNames are the separate parameters (the fit's coordinates
	// with nuclei density measured); SEDensityBase their expected standard
	// errors after the K runs as designed.
	DensityNames  []string
	SEDensityBase []float64
	// LogDetNow and LogDetAfter are ln det of the information (with the
	// ridge of designRidge), before and after.
	LogDetNow, LogDetAfter float64
	// Criterion is the one maximised (DesignD or DesignTarget).
	Criterion string
	// Target is the setting Suggest chose for DesignSpec.Targets (nil
	// without targets), TargetQuantity what is watched there
	// ("cloglog coverage" or "ln nuclei_density"), and TargetSENow and
	// TargetSEAfter its expected standard error on that scale,
	// σ·√(gᵀF⁺g), before and after the K runs (NaN: not identified).
	Target                     *Candidate
	TargetQuantity             string
	TargetSENow, TargetSEAfter float64
	Pool                       int     // feasible candidates chosen from
	Restarts                   int     // exchange searches run
	ReferenceTemperature       float64 // K, of the fit coordinates
	CoverageScale              float64 // σ used
	DensityScale               float64
}

// DesignScales returns σ of one coverage measurement (cloglog scale) and
// of one ln N measurement implied by a fit: the scale it weighted by times
// √(RSS/(N − P)), so that s² is folded in. A metric the fit did not use
// gets DefaultDesignScale.
func DesignScales(res *FitResult) (coverage, density float64) {
	s := math.Sqrt(res.ReducedChiSq)
	if !(s > 0) || math.IsInf(s, 0) {
		s = 1
	}
	coverage, density = res.CoverageScale*s, res.DensityScale*s
	nc, nd := 0, 0
	for _, r := range res.Residuals {
		if r.Metric == MetricNucleiDensity {
			nd++
		} else {
			nc++
		}
	}
	if nc == 0 || !(coverage > 0) {
		coverage = DefaultDesignScale
	}
	if nd == 0 || !(density > 0) {
		density = DefaultDesignScale
	}
	return coverage, density
}

// Design proposes K runs, each a setting of the first grow step inside the
// space and limits Suggest searches, that together with the existing runs
// maximise the D-optimality criterion
//
//	ln det F,   F = Σ_runs Σ_metrics j_m·j_mᵀ,   j_m = ∂y_m/∂x / σ_m
//
// where y_m is cloglog θ or ln N of a run predicted at the calibration, x
// the fit's coordinates (Fit: energies, prefactors referred to T_ref,
// orders; or En+2Eg and ln(κ·I·G²) at T_ref when no run measures nuclei
// density), and σ_m the measurement scales. F⁻¹ is the expected
// covariance of the estimates, so the design shrinks the volume of their
// confidence ellipsoid most. A relative ridge (1e-9 of each diagonal
// element) keeps ln det finite when a parameter is not identified by any
// choice (b with the H2 flow fixed, say).
//
// The target criterion (DesignTarget) instead minimises gᵀF⁻¹g, the
// expected variance of the target quantity (cloglog θ or ln N) at the
// setting Suggest chooses for spec.Targets, g its σ-scaled gradient with
// respect to x there: the runs go where the decision is (a c-optimal
// design, Atkinson et al. ch. 17).
//
// The candidates are Candidates settings drawn uniformly inside the
// ranges (log-uniformly for flows, pressure and duration), rounded as a
// recipe file carries them, kept when recipe.Check gives no error. The
// search is Fedorov's exchange: from a start design, each run in turn is
// replaced by the candidate that raises ln det most, until no exchange
// raises it; it restarts from a greedy sequential design and from random
// designs, and keeps the best. Runs may repeat a candidate (replicates).
//
// Errors (*InputError): Runs outside 1 … MaxDesignRuns (ReasonRunCount,
// kind KindSuggest), the ranges as in Suggest (kind KindVary), an unknown
// criterion, the target criterion without a target, a domain_size or
// unmeasured nuclei_density target watched, targets no setting meets
// (kind KindTarget), a recipe
// without a grow step, no feasible candidate, an existing observation out
// of range (kind KindFit). It panics if spec.Rand, plan, plan.Recipe or
// plan.Furnace is nil.
//
// References:
//
//   - V. V. Fedorov, Theory of Optimal Experiments, Academic Press (1972)
//     (exchange algorithm, D-optimality).
//   - A. C. Atkinson, A. N. Donev, R. D. Tobias, Optimum Experimental
//     Designs, with SAS, Oxford University Press (2007), ch. 11–12.
//   - G. E. P. Box, H. L. Lucas, "Design of experiments in non-linear
//     situations", Biometrika 46, 77 (1959) (local designs at the current
//     estimate).
//
// (Publication details from memory.)
func Design(plan *recipe.Plan, spec DesignSpec) (*DesignResult, error) {
	if spec.Rand == nil {
		panic("kinetics: Design needs DesignSpec.Rand")
	}
	spec, err := spec.withDefaults()
	if err != nil {
		return nil, err
	}
	s, err := newDesignSearcher(plan, spec)
	if err != nil {
		return nil, err
	}
	pool, err := s.pool(spec)
	if err != nil {
		return nil, err
	}
	coverageOnly := !spec.Density && !anyDensity(spec.Existing)
	tg, err := designTarget(plan, spec, coverageOnly)
	if err != nil {
		return nil, err
	}
	info, err := newDesignInfo(spec, pool, coverageOnly, tg.at())
	if err != nil {
		return nil, err
	}
	tg.watch(info, spec.Criterion == DesignTarget)
	pick := info.exchange(spec.Runs, spec.Restarts, spec.Rand)
	res := info.result(pick)
	res.Criterion = spec.Criterion
	tg.report(res, info, pick)
	res.Step, res.Pool, res.Restarts = s.grow, len(pool), spec.Restarts
	full := info
	if coverageOnly {
		if full, err = newDesignInfo(spec, pool, false, nil); err != nil {
			return nil, err
		}
	}
	res.DensityNames = full.names
	res.SEDensityBase = full.se(full.total(pick, nil))
	for k, c := range pick {
		run := DesignRun{Candidate: pool[c].cand}
		run.Recipe, run.Changes = s.changed(pool[c].cand)
		run.Candidate.Margins = nil
		run.CoverageLow, run.CoverageHigh = info.coverageInterval(c, pool[c].cand.Coverage)
		extra := make([]bool, len(pick))
		extra[k] = true
		run.SEWithDensity = full.se(full.total(pick, extra))
		res.Runs = append(res.Runs, run)
	}
	return res, nil
}

// withDefaults checks the spec and fills its defaults.
func (spec DesignSpec) withDefaults() (DesignSpec, error) {
	if spec.Runs < 1 || spec.Runs > MaxDesignRuns {
		return spec, inputErr(KindSuggest, "design: %d runs asked for, want 1 to %d", spec.Runs, MaxDesignRuns).because(ReasonRunCount).
			hinted(fmt.Sprintf("ask for the runs the furnace can do before the next fit, e.g. 4; more than %d at once is a plan, not a design", MaxDesignRuns))
	}
	if err := spec.Params.Validate(); err != nil {
		return spec, err
	}
	if err := spec.checkCriterion(); err != nil {
		return spec, err
	}
	if len(spec.Vary) == 0 {
		spec.Vary = []string{ParamTemperature, "CH4", ParamDuration}
	}
	for _, sc := range []*float64{&spec.CoverageScale, &spec.DensityScale} {
		switch {
		case *sc == 0:
			*sc = DefaultDesignScale
		case !(*sc > 0) || math.IsInf(*sc, 0):
			return spec, inputErr(KindSuggest, "design: measurement scale %g is not a positive number", *sc)
		}
	}
	if spec.Candidates <= 0 {
		spec.Candidates = DefaultDesignCandidates
	}
	if spec.Restarts <= 0 {
		spec.Restarts = DefaultDesignRestarts
	}
	if spec.MaxMFCShare == 0 {
		spec.MaxMFCShare = DefaultMaxMFCShare
	}
	if !(spec.MaxMFCShare > 0 && spec.MaxMFCShare <= 1) {
		return spec, inputErr(KindSuggest, "design: MFC share %g is outside (0, 1]", spec.MaxMFCShare)
	}
	switch {
	case spec.MeltMargin == 0:
		spec.MeltMargin = DefaultMeltMargin
	case spec.MeltMargin < 0:
		spec.MeltMargin = 0
	}
	return spec, nil
}

func anyDensity(obs []Observation) bool {
	for _, o := range obs {
		if !math.IsNaN(o.NucleiDensity) {
			return true
		}
	}
	return false
}

// designPoint is one feasible candidate.
type designPoint struct {
	cand Candidate
	pr   *Prepared
}

// newDesignSearcher is Suggest's searcher over the spec's axes, without
// targets: the same space, limits, rounding and recipe edits.
func newDesignSearcher(plan *recipe.Plan, spec DesignSpec) (*searcher, error) {
	r := plan.Recipe
	grow := r.FirstStep(recipe.KindGrow)
	if grow < 0 {
		return nil, inputErr(KindSuggest, "design: recipe %q has no grow step to change", r.Name)
	}
	ss := SuggestSpec{Params: spec.Params, Options: spec.Options, MaxMFCShare: spec.MaxMFCShare, MeltMargin: spec.MeltMargin}
	s := &searcher{spec: ss, base: r, f: plan.Furnace, grow: grow, tlo: 10, thi: 4 * 3600, fixedTime: r.Steps[grow].Duration.SI}
	for _, v := range spec.Vary {
		if err := s.addAxis(v, plan); err != nil {
			return nil, err
		}
	}
	if !s.varyTime && !(s.fixedTime > 0) {
		return nil, inputErr(KindSuggest, "design: the grow step has no duration and duration is not varied")
	}
	s.v = vecOf(spec.Params)
	return s, nil
}

// pool draws spec.Candidates feasible settings (at most 20 draws each).
func (s *searcher) pool(spec DesignSpec) ([]designPoint, error) {
	var out []designPoint
	for try := 0; len(out) < spec.Candidates && try < 20*spec.Candidates; try++ {
		x := make([]float64, len(s.axes))
		for i, a := range s.axes {
			lo, hi := s.coord(a, a.lo), s.coord(a, a.hi)
			x[i] = s.value(a, lo+spec.Rand.Float64()*(hi-lo))
		}
		x = s.quantise(x)
		t := s.fixedTime
		if s.varyTime {
			t = math.Min(roundTime(math.Exp(math.Log(s.tlo)+spec.Rand.Float64()*math.Log(s.thi/s.tlo))), s.thi)
		}
		if p, ok := s.feasible(x, t); ok {
			out = append(out, p)
		}
	}
	if len(out) == 0 {
		return nil, inputErr(KindVary, "design: no setting inside the ranges passes the recipe checks with methane flowing").
			hinted("run foilrun check on the recipe and narrow or move the --vary ranges inside the furnace's limits")
	}
	return out, nil
}

// feasible prepares the setting x at grow time t if recipe.Check finds no
// error in it and methane flows.
func (s *searcher) feasible(x []float64, t float64) (designPoint, bool) {
	plan := recipe.Derive(s.recipeAt(x, t), s.f)
	for _, fd := range recipe.CheckErrors(plan) {
		if fd.Severity == recipe.Error {
			return designPoint{}, false
		}
	}
	pr, err := Prepare(NewProfile(plan), s.spec.Params, s.spec.Options)
	if err != nil || !pr.HasCarbon() {
		return designPoint{}, false
	}
	return designPoint{cand: s.candidate(x, t, pr), pr: pr}, true
}
