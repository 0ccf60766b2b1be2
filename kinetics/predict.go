package kinetics

import (
	"fmt"
	"math"
	"sort"

	"github.com/foilrun/foilrun/recipe"
)

// Options tunes the numerics of Predict. The zero value works.
type Options struct {
	// RampStep is the longest Runge–Kutta sub-step (s) on steps whose
	// temperature changes while methane flows. Default 1 s.
	RampStep float64
	// Panels is the number of 8-point Gauss–Legendre panels per
	// constant-temperature carbon step for the nuclei density. Default 8.
	Panels int
	// Samples asks for a coverage curve of about this many points spread
	// over the recipe (plus every step boundary); 0 gives none.
	Samples int
}

func (o Options) withDefaults() Options {
	if !(o.RampStep > 0) {
		o.RampStep = 1
	}
	if o.Panels <= 0 {
		o.Panels = 8
	}
	return o
}

// StepResult is the prediction at the end of one step.
type StepResult struct {
	Index    int             // 0-based step index
	Label    string          // "6 grow (growth)"
	Kind     recipe.StepKind // step kind
	Start    float64         // s from the recipe start
	Duration float64         // s
	T0, T1   float64         // K
	PC, PH   float64         // CH4 and H2 partial pressures, Pa

	Carbon  bool // methane flows
	Etching bool // methane flows but pC ≤ pCeq: hydrogen etches, no growth

	// NucleationRate (1/(m² s)) and GrowthRate (m/s) at the step's end
	// temperature; 0 without methane.
	NucleationRate float64
	GrowthRate     float64

	Coverage      float64 // θ at the end of the step
	NucleiDensity float64 // N at the end of the step, 1/m²
	DomainSize    float64 // sqrt(4θ/(πN)) at the end of the step, m
}

// Sample is one point of the coverage curve.
type Sample struct {
	Time          float64 // s from the recipe start
	Coverage      float64 // θ
	NucleiDensity float64 // 1/m²
	DomainSize    float64 // m
}

// Result is a prediction for a whole recipe.
type Result struct {
	Recipe string
	Mode   Mode
	Shape  Shape

	Coverage      float64 // final θ
	NucleiDensity float64 // final N, 1/m²
	DomainSize    float64 // final sqrt(4θ/(πN)), m
	Radius        float64 // R, the radius a domain nucleated at the first carbon admission would have, m

	// CarbonStart is when methane first flows (s from the recipe start),
	// NaN when it never does. T50, T90 and T99 are the times from
	// CarbonStart to 50, 90 and 99 % coverage, NaN when not reached.
	CarbonStart   float64
	T50, T90, T99 float64

	Etching bool         // some step with methane etches
	Steps   []StepResult // one per recipe step
	Curve   []Sample     // when Options.Samples > 0
	Notes   []string     // what the model left out, e.g. other carbon sources
	Profile Profile      // the profile predicted on
	Params  Params       // the parameters used
	Options Options      // the numerics used (defaults filled in)
}

// Predict runs the model over a derived plan. It returns an error for
// parameters out of their domain (Params.Validate) or a profile the model
// cannot use; it panics if plan is nil.
func Predict(plan *recipe.Plan, p Params, opts Options) (Result, error) {
	return PredictProfile(NewProfile(plan), p, opts)
}

// PredictProfile runs the model over a profile (see Predict).
func PredictProfile(prof Profile, p Params, opts Options) (Result, error) {
	if err := p.Validate(); err != nil {
		return Result{}, err
	}
	opts = opts.withDefaults()
	if err := checkSegments(prof.Segments); err != nil {
		return Result{}, err
	}
	in := newIntegrator(prof, p, opts)
	in.run(prof.Segments, 0)
	return in.result(), nil
}

// checkSegments returns an error for the first segment the model cannot
// use: carbon at a temperature that is not positive and finite, or a
// duration or partial pressure that is negative, NaN or infinite.
func checkSegments(segs []Segment) error {
	for _, s := range segs {
		if s.Carbon() && (!(s.T0 > 0) || !(s.T1 > 0) || math.IsInf(s.T0, 0) || math.IsInf(s.T1, 0)) {
			return fmt.Errorf("predict: step %s: temperature %g→%g K is not usable", s.Label, s.T0, s.T1)
		}
		if !(s.Duration >= 0) || math.IsInf(s.Duration, 0) || !(s.PH >= 0) || !(s.PC >= 0) || math.IsInf(s.PC, 0) || math.IsInf(s.PH, 0) {
			return fmt.Errorf("predict: step %s: duration %g s or partial pressures %g, %g Pa not usable", s.Label, s.Duration, s.PC, s.PH)
		}
	}
	return nil
}

// newIntegrator starts a prediction of prof at bare copper, before its
// first segment. opts has its defaults filled in.
func newIntegrator(prof Profile, p Params, opts Options) integrator {
	in := integrator{p: p, kappa: p.Kappa(), opts: opts, res: Result{
		Recipe: prof.Recipe, Mode: p.Mode, Shape: p.Shape, Profile: prof, Params: p, Options: opts,
		CarbonStart: math.NaN(), T50: math.NaN(), T90: math.NaN(), T99: math.NaN(),
		Steps: make([]StepResult, len(prof.Segments)),
	}}
	if in.res.Mode == "" {
		in.res.Mode = Continuous
	}
	if in.res.Shape == "" {
		in.res.Shape = Round
	}
	if opts.Samples > 0 && prof.Total > 0 {
		in.every = prof.Total / float64(opts.Samples)
	}
	in.sample(0)
	return in
}

// run integrates segs, the segments of the profile from index from on.
func (in *integrator) run(segs []Segment, from int) {
	for i, seg := range segs {
		in.segment(from+i, seg)
	}
}

// result finishes the prediction after the last segment.
func (in *integrator) result() Result {
	r := &in.res
	θ := 1 - math.Exp(-in.m.extended(in.kappa))
	r.Coverage, r.NucleiDensity, r.DomainSize, r.Radius = θ, in.m.N, DomainSize(θ, in.m.N), in.m.R
	if len(r.Curve) > 0 {
		sort.SliceStable(r.Curve, func(i, j int) bool { return r.Curve[i].Time < r.Curve[j].Time })
	}
	return in.res
}

type integrator struct {
	p       Params
	kappa   float64
	opts    Options
	m       moments
	seeded  bool
	res     Result
	every   float64 // curve sample interval, s; 0 for no curve
	next    float64 // last sample time on the regular grid
	anyEtch bool    // a ramp sub-step etched
	// firstLevel is the first of the coverage levels whose times are
	// solved for (0: T50, T90 and T99; a window sets 2, only T99).
	firstLevel int
}

func (in *integrator) state(m moments) Sample {
	θ := 1 - math.Exp(-m.extended(in.kappa))
	return Sample{Coverage: θ, NucleiDensity: m.N, DomainSize: DomainSize(θ, m.N)}
}

// sample records the current state at time t when a curve is wanted.
func (in *integrator) sample(t float64) {
	if in.every == 0 {
		return
	}
	s := in.state(in.m)
	s.Time = t
	in.res.Curve = append(in.res.Curve, s)
}

// crossings records the times to 50/90/99 % that fall in (x0, x1], with
// solve(y) giving the time from the segment start.
func (in *integrator) crossings(start, x0, x1 float64, solve func(y float64) float64) {
	ts := [3]*float64{&in.res.T50, &in.res.T90, &in.res.T99}
	for k := in.firstLevel; k < len(extendedLevels); k++ {
		if y := extendedLevels[k]; math.IsNaN(*ts[k]) && x0 < y && y <= x1 {
			*ts[k] = start + solve(y) - in.res.CarbonStart
		}
	}
}

func (in *integrator) segment(i int, seg Segment) {
	sr := StepResult{Index: seg.Index, Label: seg.Label, Kind: seg.Kind, Start: seg.Start, Duration: seg.Duration,
		T0: seg.T0, T1: seg.T1, PC: seg.PC, PH: seg.PH, Carbon: seg.Carbon()}
	if seg.OtherCarbon > 0 {
		in.res.Notes = append(in.res.Notes, fmt.Sprintf("step %s: carbon sources other than CH4 (%.3g Pa) are not modelled", seg.Label, seg.OtherCarbon))
	}
	if seg.Carbon() {
		I, G, etch := in.p.rates(seg.T1, seg.PC, seg.PH)
		sr.NucleationRate, sr.GrowthRate, sr.Etching = I, G, etch
		if in.res.Mode == SiteSaturated {
			sr.NucleationRate = 0
		}
		if math.IsNaN(in.res.CarbonStart) {
			in.res.CarbonStart = seg.Start
		}
		if seg.Isothermal() || seg.Duration == 0 {
			in.isothermal(seg, I, G, etch)
		} else {
			in.ramp(seg)
		}
		if sr.Etching || in.anyEtch {
			in.res.Etching = in.res.Etching || sr.Etching || in.anyEtch
			sr.Etching = sr.Etching || in.anyEtch
			in.anyEtch = false
		}
	} else if in.every > 0 {
		for in.next+in.every < seg.Start+seg.Duration {
			in.next += in.every
			in.sample(in.next)
		}
	}
	in.sample(seg.Start + seg.Duration)
	st := in.state(in.m)
	sr.Coverage, sr.NucleiDensity, sr.DomainSize = st.Coverage, st.NucleiDensity, st.DomainSize
	in.res.Steps[i] = sr
}

// seedIfDue puts the site-saturated nuclei down at the first growing
// carbon step.
func (in *integrator) seedIfDue(G float64) {
	if in.res.Mode == SiteSaturated && !in.seeded && G > 0 {
		in.m.seed(in.kappa, in.p.SiteDensity)
		in.seeded = true
	}
}

func (in *integrator) isothermal(seg Segment, I, G float64, etch bool) {
	if etch {
		return
	}
	if in.res.Mode == SiteSaturated {
		in.seedIfDue(G)
		I = 0
	}
	m0 := in.m
	x0 := m0.extended(in.kappa)
	end := constantStep(m0, in.kappa, I, G, seg.Duration, in.opts.Panels)
	x1 := end.extended(in.kappa)
	in.crossings(seg.Start, x0, x1, func(y float64) float64 {
		x := func(t float64) float64 { return m0.constant(I, G, t).extended(in.kappa) }
		dx := func(t float64) float64 { return m0.constant(I, G, t).slope(in.kappa, G) }
		return solveIncreasing(x, dx, y, 0, seg.Duration)
	})
	if in.every > 0 {
		for in.next+in.every < seg.Start+seg.Duration {
			in.next += in.every
			in.m = constantStep(m0, in.kappa, I, G, in.next-seg.Start, in.opts.Panels)
			in.sample(in.next)
		}
	}
	in.m = end
}

func (in *integrator) ramp(seg Segment) {
	n := int(math.Ceil(seg.Duration / in.opts.RampStep))
	if n < 8 {
		n = 8
	}
	h := seg.Duration / float64(n)
	rates := func(t float64) (I, G float64) {
		I, G, etch := in.p.rates(seg.TemperatureAt(t), seg.PC, seg.PH)
		if etch {
			in.anyEtch = true
		}
		if in.res.Mode == SiteSaturated {
			I = 0
		}
		return I, G
	}
	ia, ga := rates(0)
	for k := 0; k < n; k++ {
		t := float64(k) * h
		ib, gb := rates(t + h/2)
		ic, gc := rates(t + h)
		if in.res.Mode == SiteSaturated && !in.seeded && (ga > 0 || gb > 0) {
			in.seedIfDue(1)
		}
		m0 := in.m
		m1 := rk4(m0, in.kappa, h, ia, ga, ib, gb, ic, gc)
		x0, x1 := m0.extended(in.kappa), m1.extended(in.kappa)
		d0, d1 := m0.slope(in.kappa, ga), m1.slope(in.kappa, gc)
		in.crossings(seg.Start+t, x0, x1, func(y float64) float64 { return hermite(x0, d0, x1, d1, h, y) })
		in.m = m1
		if in.every > 0 && in.next+in.every <= seg.Start+t+h && in.next+in.every < seg.Start+seg.Duration {
			in.next += in.every
			for in.next+in.every <= seg.Start+t+h {
				in.next += in.every
			}
			in.sample(seg.Start + t + h)
		}
		ia, ga = ic, gc
	}
}
