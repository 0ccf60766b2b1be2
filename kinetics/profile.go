package kinetics

import (
	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/recipe/gas"
)

// Segment is one step of a recipe as the model sees it: a linear temperature
// course and constant partial pressures.
type Segment struct {
	Index    int             // 0-based step index in the plan
	Label    string          // "6 grow (growth)"
	Kind     recipe.StepKind // the step's kind
	Start    float64         // s from the start of the recipe
	Duration float64         // s
	T0, T1   float64         // K at the start and end of the step
	PC       float64         // CH4 partial pressure, Pa
	PH       float64         // H2 partial pressure, Pa
	// OtherCarbon is the summed partial pressure (Pa) of carbon sources
	// other than CH4; the model does not count them.
	OtherCarbon float64
}

// Carbon reports whether methane flows in the segment.
func (s Segment) Carbon() bool { return s.PC > 0 }

// Isothermal reports whether the temperature is constant in the segment.
func (s Segment) Isothermal() bool { return s.T0 == s.T1 }

// TemperatureAt returns the temperature (K) at time t (s from the segment's
// start), clamped to the segment.
func (s Segment) TemperatureAt(t float64) float64 {
	if s.Duration <= 0 || t <= 0 {
		return s.T0
	}
	if t >= s.Duration {
		return s.T1
	}
	return s.T0 + (s.T1-s.T0)*t/s.Duration
}

// Profile is a recipe laid out in time for the model. It is computed once
// from a plan (NewProfile) and can be predicted on many times.
type Profile struct {
	Recipe   string    // recipe name
	Segments []Segment // in recipe order
	Total    float64   // s
}

// NewProfile takes the time course of temperature and partial pressures
// from a derived plan. It panics if plan is nil.
func NewProfile(plan *recipe.Plan) Profile {
	p := Profile{Segments: make([]Segment, len(plan.Steps)), Total: plan.Total}
	if plan.Recipe != nil {
		p.Recipe = plan.Recipe.Name
	}
	for i := range plan.Steps {
		p.Segments[i] = segmentOf(&plan.Steps[i])
	}
	return p
}

// segmentOf is the segment of one step of a plan.
func segmentOf(sp *recipe.StepPlan) Segment {
	seg := Segment{
		Index: sp.Index, Label: sp.Label, Start: sp.Start, Duration: sp.Duration,
		T0: sp.T0, T1: sp.T1, PC: sp.PCH4, PH: sp.PH2,
	}
	if sp.Step != nil {
		seg.Kind = sp.Step.Kind
	}
	for _, fl := range sp.Flows {
		if fl.Gas.Role == gas.CarbonSource && fl.Gas.Symbol != "CH4" {
			seg.OtherCarbon += fl.Partial
		}
	}
	return seg
}

// At returns the temperature (K) and the CH4 and H2 partial pressures (Pa)
// at time t (s from the recipe start). Outside the recipe it returns the
// first or last step's values.
func (p Profile) At(t float64) (T, pC, pH float64) {
	if len(p.Segments) == 0 {
		return 0, 0, 0
	}
	for _, s := range p.Segments {
		if t < s.Start+s.Duration {
			return s.TemperatureAt(t - s.Start), s.PC, s.PH
		}
	}
	s := p.Segments[len(p.Segments)-1]
	return s.T1, s.PC, s.PH
}
