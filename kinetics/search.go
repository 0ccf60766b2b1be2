package kinetics

import (
	"fmt"
	"math"
	"sort"

	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/recipe/gas"
)

// What Suggest can minimise.
const (
	MinimizeTime    = "time"    // grow-step duration
	MinimizeMethane = "methane" // CH4 used in the grow step (flow × duration)
)

// SuggestSpec says what to look for. Zero fields take their defaults.
type SuggestSpec struct {
	Targets []Target // at least one
	// Vary lists the grow-step parameters searched, in the vocabulary of
	// Parameters: "temperature", "duration", "pressure" (the set-point)
	// and gas symbols (their flows, e.g. "CH4", "H2"), each optionally
	// with a range NAME=FROM:TO with units ("temperature=950C:1060C",
	// "CH4=2sccm:20sccm", "duration=1min:2h", "pressure=1Torr:20Torr").
	// The old name "time" is an error naming "duration". Default
	// temperature, CH4, duration. Default ranges: temperature from 100 K
	// below the recipe's (or the ceiling) to the furnace's
	// TemperatureCeiling, and at least MeltMargin below copper's melting
	// point less the thermocouple margin; flows from the line's low end to
	// MaxMFCShare of its full scale;
	// pressure from the base pressure (or the gauge's low end) to one
	// atmosphere (or the gauge's high end); duration from 10 s to 4 h.
	Vary     []string
	Minimize string  // MinimizeTime (default) or MinimizeMethane
	Params   Params  // model parameters
	Options  Options // numerics of each prediction
	// Confidence, when > 0, is the level of the equal-tailed interval
	// (PredictInterval) whose bound must meet each target: the lower bound
	// for ">=", the upper for "<=". Needs Params.Covariance.
	Confidence float64
	// Interval sets the samples and seed; default 200 samples, seed 1.
	Interval IntervalSettings
	// Grid is the number of values per varied axis other than time in
	// the coarse search, default 13 (9 with three or more axes).
	Grid int
	// Top is how many candidates to return, default 5.
	Top int
	// AllowWarnings keeps candidates that recipe.Check gives warnings;
	// by default only candidates with no warning are suggested.
	AllowWarnings bool
	// MaxMFCShare caps a varied flow at this fraction of its line's full
	// scale, in (0, 1], default 0.9: a thermal MFC near full scale has no
	// room to correct (common practice).
	MaxMFCShare float64
	// MeltMargin (K, default 10 K) keeps the searched temperature this far
	// below copper's melting point less the furnace's thermocouple margin
	// (common practice); a negative value means none.
	MeltMargin float64
}

// Default search margins of SuggestSpec (common practice).
const (
	DefaultMaxMFCShare = 0.9
	DefaultMeltMargin  = 10.0 // K
)

// Suggest searches the first grow step's parameters for the cheapest
// recipe whose prediction meets every target and that recipe.Check passes
// without errors (and without warnings unless spec.AllowWarnings), with
// flows at most spec.MaxMFCShare of full scale and the temperature at
// least spec.MeltMargin below copper's melting point less the
// thermocouple margin. For each point of a grid over the varied parameters
// other than time (refined four times around the best point by halving the
// spacing) the grow time is solved for, not gridded: the earliest time at
// which every ">=" target holds (coverage and domain size grow with time),
// found by the Illinois variant of regula falsi on ln t; "<=" targets are
// then checked at that time. With Confidence the time is the (1+L)/2
// quantile of the sampled parameter sets' times, so the interval's lower
// bound meets the target. It returns an *InputError (kind KindSuggest or
// KindVary, wrapping ErrSuggest) for no target, a target on a metric the
// parameters do not predict (Params.Predicts), an unknown parameter or
// range, a recipe without a grow step or a gas without a line, and a
// Suggestion with Met false when nothing in range meets the targets. It
// panics if plan, plan.Recipe or plan.Furnace is nil.
//
// References: M. Dowell, P. Jarratt, "A modified regula falsi method for
// computing the root of an equation", BIT 11, 168 (1971) (Illinois
// method, see illinois; from memory).
func Suggest(plan *recipe.Plan, spec SuggestSpec) (*Suggestion, error) {
	if err := spec.Params.Validate(); err != nil {
		return nil, err
	}
	spec, err := spec.withDefaults()
	if err != nil {
		return nil, err
	}
	if err := checkPredicted(spec.Targets, spec.Params); err != nil {
		return nil, err
	}
	r := plan.Recipe
	grow := r.FirstStep(recipe.KindGrow)
	if grow < 0 {
		return nil, inputErr(KindSuggest, "suggest: recipe %q has no grow step to change", r.Name)
	}
	s := &searcher{spec: spec, base: r, f: plan.Furnace, grow: grow, tlo: 10, thi: 4 * 3600, fixedTime: r.Steps[grow].Duration.SI}
	for _, v := range spec.Vary {
		if err := s.addAxis(v, plan); err != nil {
			return nil, err
		}
	}
	if !s.varyTime && !(s.fixedTime > 0) {
		return nil, inputErr(KindSuggest, "suggest: the grow step has no duration and duration is not varied")
	}
	if spec.Confidence != 0 {
		if err := s.sample(); err != nil {
			return nil, err
		}
	}
	s.v = vecOf(spec.Params)
	return s.run()
}

// withDefaults checks the spec and fills its defaults.
func (spec SuggestSpec) withDefaults() (SuggestSpec, error) {
	if len(spec.Targets) == 0 {
		return spec, inputErr(KindSuggest, "suggest: give at least one target, e.g. coverage>=0.99")
	}
	if spec.Minimize == "" {
		spec.Minimize = MinimizeTime
	}
	if spec.Minimize != MinimizeTime && spec.Minimize != MinimizeMethane {
		return spec, inputErr(KindSuggest, "suggest: cannot minimise %q, want time or methane", spec.Minimize)
	}
	if len(spec.Vary) == 0 {
		spec.Vary = []string{ParamTemperature, "CH4", ParamDuration}
	}
	if spec.Top <= 0 {
		spec.Top = 5
	}
	switch {
	case spec.MaxMFCShare == 0:
		spec.MaxMFCShare = DefaultMaxMFCShare
	case !(spec.MaxMFCShare > 0 && spec.MaxMFCShare <= 1):
		return spec, inputErr(KindSuggest, "suggest: MFC share %g is outside (0, 1]; give a fraction of full scale such as 90%%", spec.MaxMFCShare)
	}
	switch {
	case math.IsInf(spec.MeltMargin, 0) || math.IsNaN(spec.MeltMargin):
		return spec, inputErr(KindSuggest, "suggest: melt margin %g K is not a finite temperature difference", spec.MeltMargin)
	case spec.MeltMargin == 0:
		spec.MeltMargin = DefaultMeltMargin
	case spec.MeltMargin < 0:
		spec.MeltMargin = 0
	}
	if spec.Confidence != 0 && !(spec.Confidence > 0 && spec.Confidence < 1) {
		return spec, inputErr(KindSuggest, "suggest: confidence %g is outside (0, 1)", spec.Confidence)
	}
	return spec, nil
}

// sample draws the parameter sets whose bound must meet the targets.
func (s *searcher) sample() error {
	in := s.spec.Interval
	if in.Samples <= 0 {
		in.Samples = 200
	}
	in = in.withDefaults()
	samples, err := SampleParams(s.spec.Params, in.Samples, in.Seed)
	if err != nil {
		return fmt.Errorf("suggest: confidence bound: %w", err)
	}
	s.samples = make([]fitVec, len(samples))
	for k, q := range samples {
		s.samples[k] = vecOf(q)
	}
	s.q = (1 + s.spec.Confidence) / 2
	return nil
}

type searcher struct {
	spec      SuggestSpec
	base      *recipe.Recipe
	f         *recipe.Furnace
	grow      int
	axes      []axisRange
	varyTime  bool
	tlo, thi  float64
	fixedTime float64
	v         fitVec
	samples   []fitVec
	q         float64
	evaluated int
	closest   *Candidate
	closeness float64
}

// point is one evaluated grid point.
type point struct {
	x    []float64 // axis values, SI
	ok   bool      // meets the targets and passes Check
	cand Candidate
	rule string // first Check error, when infeasible
}

func (s *searcher) run() (*Suggestion, error) {
	n := s.spec.Grid
	if n <= 0 {
		n = 13
		if len(s.axes) >= 3 {
			n = 9
		}
	}
	n = max(n, 2)
	steps := make([]float64, len(s.axes))
	for i, a := range s.axes {
		steps[i] = (s.coord(a, a.hi) - s.coord(a, a.lo)) / float64(n-1)
	}
	pts := s.coarse(n, steps)
	best := bestPoint(pts)
	for round := 0; round < 4 && best != nil && len(s.axes) > 0; round++ {
		for i := range steps {
			steps[i] /= 2
		}
		pts = s.refine(pts, best.x, steps)
		best = bestPoint(pts)
	}
	sug := &Suggestion{Step: s.grow, Evaluated: s.evaluated, Minimize: s.spec.Minimize, Method: "best estimate"}
	if s.samples != nil {
		sug.Method = fmt.Sprintf("bound of the %.0f %% interval (%d parameter sets from the covariance, seed %d)", 100*s.spec.Confidence, len(s.samples), s.spec.Interval.withDefaults().Seed)
	}
	if best == nil {
		sug.Closest = s.closest
		sug.Binding = s.binding()
		return sug, nil
	}
	s.finish(sug, pts, best)
	return sug, nil
}

// odometer advances idx, each digit from lo to hi, and reports false when
// it has wrapped round.
func odometer(idx []int, lo, hi int) bool {
	for k := range idx {
		idx[k]++
		if idx[k] <= hi {
			return true
		}
		idx[k] = lo
	}
	return false
}

// coarse evaluates the n-point grid over every axis.
func (s *searcher) coarse(n int, steps []float64) []point {
	var pts []point
	idx := make([]int, len(s.axes))
	for {
		x := make([]float64, len(s.axes))
		for i, a := range s.axes {
			x[i] = s.value(a, s.coord(a, a.lo)+float64(idx[i])*steps[i])
		}
		pts = append(pts, s.eval(x))
		if !odometer(idx, 0, n-1) {
			return pts
		}
	}
}

// refine evaluates the 3ⁿ − 1 neighbours of center at the given spacing,
// kept inside the ranges.
func (s *searcher) refine(pts []point, center, steps []float64) []point {
	center = append([]float64(nil), center...)
	offs := make([]int, len(s.axes))
	for i := range offs {
		offs[i] = -1
	}
	for {
		x := make([]float64, len(s.axes))
		moved := false
		for i, a := range s.axes {
			c := s.coord(a, center[i]) + float64(offs[i])*steps[i]
			c = math.Min(math.Max(c, s.coord(a, a.lo)), s.coord(a, a.hi))
			x[i] = s.value(a, c)
			moved = moved || offs[i] != 0
		}
		if moved {
			pts = append(pts, s.eval(x))
		}
		if !odometer(offs, -1, 1) {
			return pts
		}
	}
}

// finish quantises the best point to the figures a recipe file carries,
// evaluates it again there, and lists the cheapest distinct candidates.
func (s *searcher) finish(sug *Suggestion, pts []point, best *point) {
	final := s.eval(s.quantise(best.x))
	if !final.ok {
		final = *best
	}
	sug.Met = true
	sug.Best = &final.cand
	sug.Recipe, sug.Changes = s.changed(final.cand)
	var oks []point
	for _, p := range pts {
		if p.ok {
			oks = append(oks, p)
		}
	}
	sort.SliceStable(oks, func(i, j int) bool { return oks[i].cand.Cost < oks[j].cand.Cost })
	sug.Candidates = append(sug.Candidates, final.cand)
	for _, p := range oks {
		if len(sug.Candidates) >= s.spec.Top {
			break
		}
		dup := false
		for _, c := range sug.Candidates {
			dup = dup || sameCandidate(p.cand, c)
		}
		if !dup {
			sug.Candidates = append(sug.Candidates, p.cand)
		}
	}
	sug.Evaluated = s.evaluated
}

// coord maps an axis value to the grid coordinate (log for flows).
func (s *searcher) coord(a axisRange, v float64) float64 {
	if a.log {
		return math.Log(v)
	}
	return v
}

func (s *searcher) value(a axisRange, c float64) float64 {
	if a.log {
		return math.Exp(c)
	}
	return c
}

// quantise rounds temperatures to 0.1 K, flows to 3 significant figures
// in sccm and pressures to 3 in Pa (never above the range).
func (s *searcher) quantise(x []float64) []float64 {
	out := make([]float64, len(x))
	for i, a := range s.axes {
		switch a.dim {
		case recipe.Temperature:
			out[i] = math.Min(recipe.Kelvin(math.Round(recipe.Celsius(x[i])*10)/10), a.hi)
		case recipe.Pressure:
			out[i] = math.Min(threeFigures(x[i], 1), a.hi)
		default:
			out[i] = math.Min(threeFigures(x[i], gas.MolPerSCCMPerSecond), a.hi)
		}
	}
	return out
}

// threeFigures rounds v to 3 significant figures in the unit (SI value of
// one unit) and returns it in SI.
func threeFigures(v, unit float64) float64 {
	u := v / unit
	e := math.Pow(10, math.Floor(math.Log10(u))-2)
	return math.Round(u/e) * e * unit
}

// roundTime rounds a grow time up to the next 0.01 min (0.6 s).
func roundTime(t float64) float64 { return math.Ceil(t/0.6-1e-9) * 0.6 }

func (s *searcher) recipeAt(x []float64, dur float64) *recipe.Recipe {
	r := *s.base
	r.Steps = append([]recipe.Step(nil), s.base.Steps...)
	st := &r.Steps[s.grow]
	old := st.Temperature.SI
	for i, a := range s.axes {
		setParam(st, a.axis(), x[i])
	}
	if st.Temperature.SI != old {
		followTemperature(r.Steps[:s.grow], old, st.Temperature)
	}
	setParam(st, Axis{Param: ParamDuration, Dim: recipe.Duration}, dur)
	return &r
}

// followTemperature moves the anneal, ramp and grow steps just before the
// grow step that sat at its old temperature (K) to t, up to and including
// the nearest ramp: the rule recipe.EditRecipe follows when it writes the
// suggestion, so the recipe checked and predicted is the one written.
func followTemperature(before []recipe.Step, old float64, t recipe.Quantity) {
	for i := len(before) - 1; i >= 0; i-- {
		st := &before[i]
		q := &st.Temperature
		switch st.Kind {
		case recipe.KindAnneal, recipe.KindGrow:
		case recipe.KindRamp:
			q = &st.To
		default:
			return
		}
		if math.Abs(q.SI-old) > 0.01 {
			return
		}
		*q = t
		if st.Kind == recipe.KindRamp {
			return
		}
	}
}

// eval predicts one grid point: the cheapest time meeting the targets,
// then the checks at that time.
func (s *searcher) eval(x []float64) point {
	s.evaluated++
	pt := point{x: x}
	probe := s.fixedTime
	if s.varyTime {
		probe = s.thi
	}
	r := s.recipeAt(x, probe)
	plan := recipe.Derive(r, s.f)
	for _, fd := range recipe.CheckErrors(plan) {
		if fd.Severity == recipe.Error && fd.Rule != "copper.evaporation" {
			pt.rule = fd.Rule
			return pt
		}
	}
	pr, err := Prepare(NewProfile(plan), s.spec.Params, s.spec.Options)
	if err != nil || !pr.HasCarbon() {
		pt.rule = "growth.no-carbon"
		return pt
	}
	t := s.fixedTime
	if s.varyTime {
		t = s.solveTime(pr)
		if math.IsInf(t, 1) {
			s.noteClosest(x, pr)
			return pt
		}
		t = roundTime(t)
		if t > s.thi {
			t = s.thi
		}
	}
	c := s.candidate(x, t, pr)
	if !s.meets(c) {
		s.noteClosest(x, pr)
		return pt
	}
	r = s.recipeAt(x, t)
	for _, fd := range recipe.Check(recipe.Derive(r, s.f)) {
		if fd.Severity == recipe.Error || (fd.Severity == recipe.Warning && !s.spec.AllowWarnings) {
			pt.rule = fd.Rule
			return pt
		}
	}
	pt.ok, pt.cand = true, c
	return pt
}

// quantity returns the target's quantity at grow time t for fit vector v.
func (s *searcher) quantity(pr *Prepared, v *fitVec, tg Target, t float64) float64 {
	X, N := pr.final(v, nil, s.grow, t)
	θ := -math.Expm1(-X)
	switch tg.Quantity {
	case MetricCoverage:
		return θ
	case MetricDomainSize:
		return DomainSize(θ, N)
	}
	return N
}
