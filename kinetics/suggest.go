package kinetics

import (
	"errors"
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"

	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/recipe/gas"
)

// ErrSuggest is wrapped by every error about what was asked of Suggest (a
// target, a parameter to vary, a range), so callers can report it as bad
// input.
var ErrSuggest = errors.New("bad suggest input")

func suggestErr(format string, args ...any) error {
	return &inputError{fmt.Sprintf(format, args...), ErrSuggest}
}

// Quantities a target can name.
const (
	TargetCoverage      = "coverage"
	TargetDomainSize    = "domain-size"
	TargetNucleiDensity = "nuclei-density"
)

// Target is one requirement on the final prediction.
type Target struct {
	Quantity string  // TargetCoverage, TargetDomainSize or TargetNucleiDensity
	AtLeast  bool    // ">=" (true) or "<=" (false)
	Value    float64 // θ, m, or 1/m²
	Text     string  // as written
}

// ParseTarget reads QUANTITY>=VALUE or QUANTITY<=VALUE: "coverage>=0.99",
// "coverage>=99%", "domain-size>=40um" (nm, um, µm, mm, m),
// "nuclei-density<=100/mm2" (/m2, /cm2, /mm2, /um2). Coverage targets must
// lie strictly between 0 and 1. Errors wrap ErrSuggest.
func ParseTarget(s string) (Target, error) {
	t := Target{Text: s}
	var name, val string
	if i := strings.Index(s, ">="); i >= 0 {
		name, val, t.AtLeast = s[:i], s[i+2:], true
	} else if i := strings.Index(s, "<="); i >= 0 {
		name, val = s[:i], s[i+2:]
	} else {
		return t, suggestErr("target %q: want QUANTITY>=VALUE or QUANTITY<=VALUE, e.g. coverage>=0.99 or domain-size>=40um", s)
	}
	name = strings.ToLower(strings.TrimSpace(strings.ReplaceAll(name, "_", "-")))
	val = strings.TrimSpace(val)
	num, unit := splitLeadingNumber(val)
	x, err := strconv.ParseFloat(num, 64)
	if num == "" || err != nil || math.IsNaN(x) || math.IsInf(x, 0) {
		return t, suggestErr("target %q: %q is not a number", s, val)
	}
	unit = strings.TrimSpace(unit)
	switch name {
	case TargetCoverage:
		t.Quantity = name
		switch unit {
		case "":
		case "%":
			x /= 100
		default:
			return t, suggestErr("target %q: coverage is a fraction such as 0.99 or 99%%, not %q", s, unit)
		}
		if !(x > 0 && x < 1) {
			return t, suggestErr("target %q: coverage %g must lie strictly between 0 and 1 (full coverage is only reached in the limit)", s, x)
		}
	case TargetDomainSize:
		t.Quantity = name
		f, ok := map[string]float64{"nm": 1e-9, "um": 1e-6, "µm": 1e-6, "mm": 1e-3, "m": 1}[unit]
		if !ok {
			return t, suggestErr("target %q: domain size needs a length unit (nm, um, mm, m), got %q", s, unit)
		}
		x *= f
	case TargetNucleiDensity:
		t.Quantity = name
		f, err := areaKind.parse(val)
		if err != nil {
			return t, suggestErr("target %q: %v", s, err)
		}
		x = f
	default:
		return t, suggestErr("target %q: unknown quantity %q, want coverage, domain-size or nuclei-density", s, name)
	}
	if !(x > 0) {
		return t, suggestErr("target %q: the value must be greater than zero", s)
	}
	t.Value = x
	return t, nil
}

func splitLeadingNumber(s string) (num, rest string) {
	for i := len(s); i > 0; i-- {
		if _, err := strconv.ParseFloat(s[:i], 64); err == nil {
			return s[:i], s[i:]
		}
	}
	return "", s
}

// What Suggest can minimise.
const (
	MinimizeTime    = "time"    // grow-step duration
	MinimizeMethane = "methane" // CH4 used in the grow step (flow × duration)
)

// SuggestSpec says what to look for. Zero fields take their defaults.
type SuggestSpec struct {
	Targets []Target // at least one
	// Vary lists the grow-step parameters searched: "temperature", "time"
	// (the duration) and gas symbols (their flows, e.g. "CH4", "H2"), each
	// optionally with a range NAME=FROM:TO with units
	// ("temperature=950C:1060C", "CH4=2sccm:20sccm", "time=1min:2h").
	// Default temperature, CH4, time. Default ranges: temperature from
	// 100 K below the recipe's (or the hottest allowed) to the hottest the
	// heater, the tube and copper's melting point with the thermocouple
	// margin allow; flows from the line's low end to its full scale; time
	// from 10 s to 4 h.
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
}

// Margin is how far a candidate sits from one limit.
type Margin struct {
	Limit string  // "heater maximum", "CH4 line full scale", "coverage target", ...
	Value float64 // the candidate's value, display unit
	Bound float64 // the limit, display unit
	Unit  string  // "C", "sccm", "min", "", "um", "/mm2"
	// Margin is the room left: Bound − Value for upper limits and "<="
	// targets, Value − Bound for ">=" targets; ≥ 0 when the limit holds.
	Margin float64
}

// Candidate is one point of the search that meets the targets.
type Candidate struct {
	Temperature float64            // K, grow step
	Flows       map[string]float64 // mol/s of the varied gases
	Duration    float64            // s, grow step
	Cost        float64            // s (time) or mol CH4 (methane)

	Coverage, NucleiDensity, DomainSize float64 // best estimate, θ, 1/m², m
	// Bounds holds, per target (same order), the value held to the target:
	// the best estimate, or the interval's bound with Confidence.
	Bounds  []float64
	Margins []Margin
}

// Change is one edit of the grow step, as a recipe file would write it.
type Change struct {
	Field string // "temperature", "duration" or "flows.CH4"
	Text  string // "1035.0 C", "7.52 min", "12.3 sccm"
	SI    float64
}

// Suggestion is what Suggest found.
type Suggestion struct {
	Recipe     *recipe.Recipe // the recipe with the best candidate's grow step; nil when none met the targets
	Step       int            // index of the grow step changed
	Changes    []Change       // the edits, for rewriting the recipe file
	Best       *Candidate     // nil when no candidate meets the targets
	Candidates []Candidate    // the best few, cheapest first
	Met        bool
	// When Met is false: Closest is the feasible point that came nearest
	// to the targets (at the longest time allowed) and Binding says which
	// limits bind there.
	Closest   *Candidate
	Binding   []string
	Evaluated int // grid points predicted
	Minimize  string
	Method    string // how the bounds were taken
}

type axisRange struct {
	name   string // "temperature" or a gas symbol
	dim    recipe.Dimension
	lo, hi float64
	log    bool   // log-spaced grid
	limit  string // what sets hi
}

// Suggest searches the first grow step's parameters for the cheapest
// recipe whose prediction meets every target and that recipe.Check passes
// without errors. For each point of a grid over the varied parameters
// other than time (refined four times around the best point by halving the
// spacing) the grow time is solved for, not gridded: the earliest time at
// which every ">=" target holds (coverage and domain size grow with time),
// found by the Illinois variant of regula falsi on ln t; "<=" targets are
// then checked at that time. With Confidence the time is the (1+L)/2
// quantile of the sampled parameter sets' times, so the interval's lower
// bound meets the target. It returns an error (wrapping ErrSuggest) for no
// target, an unknown parameter or range, a recipe without a grow step or
// CH4 line, and a Suggestion with Met false when nothing in range meets the
// targets. It panics if plan, plan.Recipe or plan.Furnace is nil.
//
// References: M. Dowell, P. Jarratt, "A modified regula falsi method for
// computing the root of an equation", BIT 11, 168 (1971) (Illinois
// method; from memory).
func Suggest(plan *recipe.Plan, spec SuggestSpec) (*Suggestion, error) {
	r, f := plan.Recipe, plan.Furnace
	if err := spec.Params.Validate(); err != nil {
		return nil, err
	}
	if len(spec.Targets) == 0 {
		return nil, suggestErr("suggest: give at least one target, e.g. --target coverage>=0.99")
	}
	if spec.Minimize == "" {
		spec.Minimize = MinimizeTime
	}
	if spec.Minimize != MinimizeTime && spec.Minimize != MinimizeMethane {
		return nil, suggestErr("suggest: cannot minimise %q, want time or methane", spec.Minimize)
	}
	if len(spec.Vary) == 0 {
		spec.Vary = []string{ParamTemperature, "CH4", "time"}
	}
	if spec.Top <= 0 {
		spec.Top = 5
	}
	grow := -1
	for i, s := range r.Steps {
		if s.Kind == recipe.KindGrow {
			grow = i
			break
		}
	}
	if grow < 0 {
		return nil, suggestErr("suggest: recipe %q has no grow step to change", r.Name)
	}
	gs := r.Steps[grow]
	s := &searcher{spec: spec, base: r, f: f, grow: grow, tlo: 10, thi: 4 * 3600, fixedTime: gs.Duration.SI}
	for _, v := range spec.Vary {
		if err := s.addAxis(v, plan); err != nil {
			return nil, err
		}
	}
	if !s.varyTime && !(s.fixedTime > 0) {
		return nil, suggestErr("suggest: the grow step has no duration and time is not varied")
	}
	if spec.Confidence != 0 {
		if !(spec.Confidence > 0 && spec.Confidence < 1) {
			return nil, suggestErr("suggest: confidence %g is outside (0, 1)", spec.Confidence)
		}
		in := spec.Interval
		if in.Samples <= 0 {
			in.Samples = 200
		}
		in = in.withDefaults()
		samples, err := SampleParams(spec.Params, in.Samples, in.Seed)
		if err != nil {
			return nil, fmt.Errorf("suggest --confidence: %w", err)
		}
		s.samples = make([]fitVec, len(samples))
		for k, q := range samples {
			s.samples[k] = vecOf(q)
		}
		s.q = (1 + spec.Confidence) / 2
	}
	s.v = vecOf(spec.Params)
	return s.run()
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

func (s *searcher) addAxis(spec string, plan *recipe.Plan) error {
	name, rng, hasRange := strings.Cut(spec, "=")
	name = strings.TrimSpace(name)
	var a axisRange
	switch strings.ToLower(name) {
	case "time", ParamDuration:
		s.varyTime = true
		if hasRange {
			lo, hi, err := parseRange(spec, rng, recipe.Duration)
			if err != nil {
				return err
			}
			if !(lo > 0) {
				return suggestErr("suggest --vary %q: times must be greater than zero", spec)
			}
			s.tlo, s.thi = lo, hi
		}
		return nil
	case ParamTemperature:
		a = axisRange{name: ParamTemperature, dim: recipe.Temperature}
		margin := recipe.DefaultThermocoupleMargin
		if !s.f.Heater.ThermocoupleMargin.IsZero() {
			margin = s.f.Heater.ThermocoupleMargin.SI
		}
		a.hi, a.limit = s.f.Heater.MaxTemperature.SI, fmt.Sprintf("heater maximum %.1f C", s.f.Heater.MaxTemperature.SI-273.15)
		if tl := s.f.Tube.ServiceLimit.SI; tl < a.hi {
			a.hi, a.limit = tl, fmt.Sprintf("tube service limit %.1f C", tl-273.15)
		}
		if cu := gas.CopperMeltingPoint - margin - 0.5; cu < a.hi {
			a.hi, a.limit = cu, fmt.Sprintf("copper melting point %.2f C less the %.0f K thermocouple margin", gas.CopperMeltingPoint-273.15, margin)
		}
		a.lo = math.Min(plan.Steps[s.grow].T0, a.hi) - 100
	default:
		g, err := gas.Lookup(name)
		if err != nil {
			return suggestErr("suggest --vary %q: unknown parameter %q, want temperature, time or a gas such as CH4", spec, name)
		}
		line := s.f.LineFor(g.Symbol)
		if line == nil {
			return suggestErr("suggest --vary %q: furnace %q has no gas line for %s", spec, s.f.Name, g.Symbol)
		}
		fs := line.FullScaleOfGas()
		low := recipe.DefaultLowEnd
		if !line.LowEnd.IsZero() {
			low = line.LowEnd.SI
		}
		a = axisRange{name: g.Symbol, dim: recipe.Flow, lo: fs * low * 1.001, hi: fs, log: true,
			limit: fmt.Sprintf("%s line full scale %.4g sccm", g.Symbol, fs/gas.MolPerSCCMPerSecond)}
	}
	for _, b := range s.axes {
		if b.name == a.name {
			return suggestErr("suggest --vary: %s is given twice", a.name)
		}
	}
	if hasRange {
		lo, hi, err := parseRange(spec, rng, a.dim)
		if err != nil {
			return err
		}
		if hi > a.hi*(1+1e-9) {
			return suggestErr("suggest --vary %q: the range goes beyond the %s", spec, a.limit)
		}
		if a.dim == recipe.Flow && !(lo > 0) {
			return suggestErr("suggest --vary %q: flows must be greater than zero", spec)
		}
		if hi < a.hi {
			a.limit = "top of the --vary range"
		}
		a.lo, a.hi = lo, math.Min(hi, a.hi)
	}
	s.axes = append(s.axes, a)
	return nil
}

func parseRange(spec, rng string, dim recipe.Dimension) (lo, hi float64, err error) {
	parts := strings.Split(rng, ":")
	if len(parts) != 2 {
		return 0, 0, suggestErr("suggest --vary %q: want NAME=FROM:TO, e.g. temperature=950C:1060C", spec)
	}
	a, err := recipe.Parse(parts[0], dim)
	if err != nil {
		return 0, 0, suggestErr("suggest --vary %q: from %v", spec, err)
	}
	b, err := recipe.Parse(parts[1], dim)
	if err != nil {
		return 0, 0, suggestErr("suggest --vary %q: to %v", spec, err)
	}
	if !(a.SI < b.SI) {
		return 0, 0, suggestErr("suggest --vary %q: from must be below to", spec)
	}
	return a.SI, b.SI, nil
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
	var pts []point
	// Coarse grid.
	idx := make([]int, len(s.axes))
	steps := make([]float64, len(s.axes))
	for i, a := range s.axes {
		steps[i] = (s.coord(a, a.hi) - s.coord(a, a.lo)) / float64(n-1)
	}
	for {
		x := make([]float64, len(s.axes))
		for i, a := range s.axes {
			x[i] = s.value(a, s.coord(a, a.lo)+float64(idx[i])*steps[i])
		}
		pts = append(pts, s.eval(x))
		k := 0
		for k < len(idx) {
			idx[k]++
			if idx[k] < n {
				break
			}
			idx[k] = 0
			k++
		}
		if k == len(idx) {
			break
		}
	}
	best := bestPoint(pts)
	// Refine around the best point.
	for round := 0; round < 4 && best != nil && len(s.axes) > 0; round++ {
		for i := range steps {
			steps[i] /= 2
		}
		center := append([]float64(nil), best.x...)
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
			k := 0
			for k < len(offs) {
				offs[k]++
				if offs[k] <= 1 {
					break
				}
				offs[k] = -1
				k++
			}
			if k == len(offs) {
				break
			}
		}
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
	// Quantise the best point to the figures a recipe file carries and
	// evaluate it again there.
	q := s.quantise(best.x)
	final := s.eval(q)
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
	return sug, nil
}

func sameCandidate(a, b Candidate) bool {
	if math.Abs(a.Temperature-b.Temperature) > 0.05 || relDiff(a.Duration, b.Duration) > 1e-3 {
		return false
	}
	for k, v := range a.Flows {
		if relDiff(v, b.Flows[k]) > 1e-3 {
			return false
		}
	}
	return true
}

func relDiff(a, b float64) float64 {
	if a == b {
		return 0
	}
	return math.Abs(a-b) / math.Max(math.Abs(a), math.Abs(b))
}

func bestPoint(pts []point) *point {
	var best *point
	for i := range pts {
		if pts[i].ok && (best == nil || pts[i].cand.Cost < best.cand.Cost) {
			best = &pts[i]
		}
	}
	return best
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

// quantise rounds temperatures to 0.1 K and flows to 3 significant figures
// in sccm (never above full scale).
func (s *searcher) quantise(x []float64) []float64 {
	out := make([]float64, len(x))
	for i, a := range s.axes {
		switch a.dim {
		case recipe.Temperature:
			out[i] = math.Min(math.Round((x[i]-273.15)*10)/10+273.15, a.hi)
		default:
			sccm := x[i] / gas.MolPerSCCMPerSecond
			e := math.Pow(10, math.Floor(math.Log10(sccm))-2)
			out[i] = math.Min(math.Round(sccm/e)*e*gas.MolPerSCCMPerSecond, a.hi)
		}
	}
	return out
}

// roundTime rounds a grow time up to the next 0.01 min (0.6 s).
func roundTime(t float64) float64 { return math.Ceil(t/0.6-1e-9) * 0.6 }

func (s *searcher) recipeAt(x []float64, dur float64) *recipe.Recipe {
	r := *s.base
	r.Steps = append([]recipe.Step(nil), s.base.Steps...)
	st := &r.Steps[s.grow]
	for i, a := range s.axes {
		setParam(st, Axis{Param: a.name, Dim: a.dim}, x[i])
	}
	setParam(st, Axis{Param: ParamDuration, Dim: recipe.Duration}, dur)
	return &r
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
	for _, fd := range recipe.Check(plan) {
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
		if fd.Severity == recipe.Error {
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
	case TargetCoverage:
		return θ
	case TargetDomainSize:
		return DomainSize(θ, N)
	}
	return N
}

// crossing returns the earliest t in [tlo, thi] at which the target's
// (increasing) quantity reaches its value for v; +Inf if it does not by thi.
func (s *searcher) crossing(pr *Prepared, v *fitVec, tg Target) float64 {
	g := func(lt float64) float64 {
		t := math.Exp(lt)
		var y float64
		if tg.Quantity == TargetCoverage {
			X, _ := pr.final(v, nil, s.grow, t)
			y = math.Log(X) - math.Log(-math.Log1p(-tg.Value))
		} else {
			y = math.Log(s.quantity(pr, v, tg, t)) - math.Log(tg.Value)
		}
		if math.IsNaN(y) || y < -700 {
			return -700
		}
		return math.Min(y, 700)
	}
	a, b := math.Log(s.tlo), math.Log(s.thi)
	fa, fb := g(a), g(b)
	if fa >= 0 {
		return s.tlo
	}
	if fb < 0 {
		return math.Inf(1)
	}
	side := 0
	for i := 0; i < 100 && b-a > 1e-9; i++ {
		c := (a*fb - b*fa) / (fb - fa)
		if !(c > a && c < b) {
			c = (a + b) / 2
		}
		fc := g(c)
		if fc >= 0 {
			b, fb = c, fc
			if side == 1 {
				fa /= 2
			}
			side = 1
		} else {
			a, fa = c, fc
			if side == -1 {
				fb /= 2
			}
			side = -1
		}
	}
	return math.Exp(b)
}

// solveTime returns the earliest grow time at which every ">=" target
// holds (at the interval's bound with Confidence); the shortest time
// allowed when there is none.
func (s *searcher) solveTime(pr *Prepared) float64 {
	t := s.tlo
	ts := make([]float64, len(s.samples))
	for _, tg := range s.spec.Targets {
		if !tg.AtLeast {
			continue
		}
		var tt float64
		if s.samples == nil {
			tt = s.crossing(pr, &s.v, tg)
		} else {
			for k := range s.samples {
				ts[k] = s.crossing(pr, &s.samples[k], tg)
			}
			sort.Float64s(ts)
			tt = quantileInf(ts, s.q)
		}
		t = math.Max(t, tt)
	}
	return t
}

// quantileInf is Quantile that tolerates +Inf entries.
func quantileInf(sorted []float64, q float64) float64 {
	h := q * float64(len(sorted)-1)
	hi := int(math.Ceil(h))
	if math.IsInf(sorted[min(hi, len(sorted)-1)], 1) {
		return math.Inf(1)
	}
	return Quantile(sorted, q)
}

// candidate predicts the point at grow time t.
func (s *searcher) candidate(x []float64, t float64, pr *Prepared) Candidate {
	c := Candidate{Duration: t, Flows: map[string]float64{}, Temperature: s.base.Steps[s.grow].Temperature.SI}
	for i, a := range s.axes {
		if a.dim == recipe.Temperature {
			c.Temperature = x[i]
		} else {
			c.Flows[a.name] = x[i]
		}
	}
	X, N := pr.final(&s.v, nil, s.grow, t)
	c.Coverage, c.NucleiDensity = -math.Expm1(-X), N
	c.DomainSize = DomainSize(c.Coverage, N)
	for _, tg := range s.spec.Targets {
		var b float64
		if s.samples == nil {
			b = s.quantity(pr, &s.v, tg, t)
		} else {
			ys := make([]float64, len(s.samples))
			for k := range s.samples {
				ys[k] = s.quantity(pr, &s.samples[k], tg, t)
			}
			sort.Float64s(ys)
			q := 1 - s.q
			if !tg.AtLeast {
				q = s.q
			}
			b = Quantile(ys, q)
		}
		c.Bounds = append(c.Bounds, b)
	}
	ch4 := s.base.Steps[s.grow].Flows.Of("CH4")
	if v, ok := c.Flows["CH4"]; ok {
		ch4 = v
	}
	c.Cost = t
	if s.spec.Minimize == MinimizeMethane {
		c.Cost = ch4 * t
	}
	c.Margins = s.margins(c)
	return c
}

// meets reports whether every target holds at its bound; the time
// rounding and the quantile may leave a sliver, so 1e-9 relative is
// allowed.
func (s *searcher) meets(c Candidate) bool {
	for i, tg := range s.spec.Targets {
		b := c.Bounds[i]
		if tg.AtLeast && !(b >= tg.Value*(1-1e-9)) || !tg.AtLeast && !(b <= tg.Value*(1+1e-9)) {
			return false
		}
	}
	return true
}

func (s *searcher) margins(c Candidate) []Margin {
	var ms []Margin
	for _, a := range s.axes {
		if a.dim == recipe.Temperature {
			ms = append(ms, Margin{Limit: a.limit, Value: c.Temperature - 273.15, Bound: a.hi - 273.15, Unit: "C"})
		} else {
			ms = append(ms, Margin{Limit: a.limit, Value: c.Flows[a.name] / gas.MolPerSCCMPerSecond, Bound: a.hi / gas.MolPerSCCMPerSecond, Unit: "sccm"})
		}
	}
	if s.varyTime {
		ms = append(ms, Margin{Limit: "longest grow time searched", Value: c.Duration / 60, Bound: s.thi / 60, Unit: "min"})
	}
	for i := range ms {
		ms[i].Margin = ms[i].Bound - ms[i].Value
	}
	for i, tg := range s.spec.Targets {
		m := Margin{Limit: tg.Quantity + " target", Value: c.Bounds[i], Bound: tg.Value}
		switch tg.Quantity {
		case TargetDomainSize:
			m.Value, m.Bound, m.Unit = m.Value*1e6, m.Bound*1e6, "um"
		case TargetNucleiDensity:
			m.Value, m.Bound, m.Unit = m.Value*1e-6, m.Bound*1e-6, "/mm2"
		}
		m.Margin = m.Bound - m.Value
		if tg.AtLeast {
			m.Margin = m.Value - m.Bound
		}
		ms = append(ms, m)
	}
	return ms
}

// noteClosest remembers the point that comes nearest the targets at the
// longest time allowed: the smallest worst ratio of bound to target.
func (s *searcher) noteClosest(x []float64, pr *Prepared) {
	t := s.fixedTime
	if s.varyTime {
		t = s.thi
	}
	c := s.candidate(x, t, pr)
	worst := math.Inf(1)
	for i, tg := range s.spec.Targets {
		r := c.Bounds[i] / tg.Value
		if tg.Quantity == TargetCoverage && tg.AtLeast {
			r = -math.Log1p(-math.Min(c.Bounds[i], 1-1e-16)) / -math.Log1p(-tg.Value)
		}
		if !tg.AtLeast {
			r = 1 / r
		}
		worst = math.Min(worst, r)
	}
	if s.closest == nil || worst > s.closeness {
		s.closest, s.closeness = &c, worst
	}
}

// binding names the limits the closest point sits on.
func (s *searcher) binding() []string {
	c := s.closest
	if c == nil {
		return []string{"no point of the search passes the recipe checks"}
	}
	var out []string
	for _, a := range s.axes {
		v := c.Temperature
		if a.dim != recipe.Temperature {
			v = c.Flows[a.name]
		}
		switch {
		case relDiff(v, a.hi) < 1e-6:
			out = append(out, a.limit)
		case relDiff(v, a.lo) < 1e-6:
			if a.dim == recipe.Temperature {
				out = append(out, fmt.Sprintf("lowest temperature searched %.1f C", a.lo-273.15))
			} else {
				out = append(out, fmt.Sprintf("%s line low end %.3g sccm", a.name, a.lo/gas.MolPerSCCMPerSecond))
			}
		}
	}
	if s.varyTime {
		out = append(out, fmt.Sprintf("longest grow time searched %.4g min", s.thi/60))
	} else {
		out = append(out, fmt.Sprintf("the recipe's grow time %.4g min (time not varied)", s.fixedTime/60))
	}
	return out
}

// changed returns the recipe with the candidate's grow step and the edits.
func (s *searcher) changed(c Candidate) (*recipe.Recipe, []Change) {
	var x []float64
	var ch []Change
	for _, a := range s.axes {
		if a.dim == recipe.Temperature {
			x = append(x, c.Temperature)
			ch = append(ch, Change{Field: "temperature", Text: strconv.FormatFloat(c.Temperature-273.15, 'f', 1, 64) + " C", SI: c.Temperature})
		} else {
			v := c.Flows[a.name]
			x = append(x, v)
			ch = append(ch, Change{Field: "flows." + a.name, Text: strconv.FormatFloat(v/gas.MolPerSCCMPerSecond, 'g', 3, 64) + " sccm", SI: v})
		}
	}
	if s.varyTime {
		ch = append(ch, Change{Field: "duration", Text: strconv.FormatFloat(c.Duration/60, 'f', 2, 64) + " min", SI: c.Duration})
	}
	return s.recipeAt(x, c.Duration), ch
}
