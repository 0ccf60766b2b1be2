package kinetics

import (
	"fmt"
	"math"
	"sort"
	"strconv"

	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/recipe/gas"
)

// Margin is how far a candidate sits from one limit.
type Margin struct {
	Limit string  // "heater maximum", "CH4 line full scale", "coverage target", ...
	Value float64 // the candidate's value, display unit
	Bound float64 // the limit, display unit
	Unit  string  // "C", "sccm", "Pa", "min", "", "um", "/mm2"
	// Margin is the room left: Bound − Value for upper limits and "<="
	// targets, Value − Bound for ">=" targets; ≥ 0 when the limit holds.
	Margin float64
}

// Candidate is one point of the search that meets the targets.
type Candidate struct {
	Temperature float64            // K, grow step
	Flows       map[string]float64 // mol/s of the varied gases
	Pressure    float64            // Pa, grow-step set-point when varied; else the recipe's (0 when pumped)
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
	Field string // "temperature", "pressure", "duration" or "flows.CH4"
	Text  string // "1035.0 C", "1330 Pa", "7.52 min", "12.3 sccm"
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

// candidate predicts the point at grow time t.
func (s *searcher) candidate(x []float64, t float64, pr *Prepared) Candidate {
	gs := s.base.Steps[s.grow]
	c := Candidate{Duration: t, Flows: map[string]float64{}, Temperature: gs.Temperature.SI, Pressure: gs.Pressure.Setpoint.SI}
	for i, a := range s.axes {
		c.set(a, x[i])
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

// set stores the candidate's value of an axis.
func (c *Candidate) set(a axisRange, v float64) {
	switch a.dim {
	case recipe.Temperature:
		c.Temperature = v
	case recipe.Pressure:
		c.Pressure = v
	default:
		c.Flows[a.name] = v
	}
}

// get returns the candidate's value of an axis.
func (c *Candidate) get(a axisRange) float64 {
	switch a.dim {
	case recipe.Temperature:
		return c.Temperature
	case recipe.Pressure:
		return c.Pressure
	}
	return c.Flows[a.name]
}

// axis is the range as a window Axis, for its display unit and label.
func (a axisRange) axis() Axis { return Axis{Param: a.name, Dim: a.dim} }

// unit is the display unit of the axis: "C", "Pa" or "sccm".
func (a axisRange) unit() string { return a.axis().Unit() }

// display converts an SI value of the axis to its display unit.
func (a axisRange) display(si float64) float64 { return a.axis().Display(si) }

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
		ms = append(ms, Margin{Limit: a.limit, Value: a.display(c.get(a)), Bound: a.display(a.hi), Unit: a.unit()})
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
		case MetricDomainSize:
			m.Value, m.Bound, m.Unit = shownIn(m.Value, "um"), shownIn(m.Bound, "um"), "um"
		case MetricNucleiDensity:
			m.Value, m.Bound, m.Unit = shownIn(m.Value, "/mm2"), shownIn(m.Bound, "/mm2"), "/mm2"
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
		if tg.Quantity == MetricCoverage && tg.AtLeast {
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
		v := c.get(a)
		switch {
		case relDiff(v, a.hi) < 1e-6:
			out = append(out, a.limit)
		case relDiff(v, a.lo) < 1e-6 && a.dim == recipe.Flow:
			out = append(out, fmt.Sprintf("%s line low end %.3g sccm", a.name, a.display(a.lo)))
		case relDiff(v, a.lo) < 1e-6 && a.dim == recipe.Temperature:
			out = append(out, fmt.Sprintf("lowest temperature searched %.1f C", a.display(a.lo)))
		case relDiff(v, a.lo) < 1e-6:
			out = append(out, fmt.Sprintf("lowest %s searched %.4g %s", a.name, a.display(a.lo), a.unit()))
		}
	}
	if s.varyTime {
		out = append(out, fmt.Sprintf("longest grow time searched %.4g min", s.thi/60))
	} else {
		out = append(out, fmt.Sprintf("the recipe's grow time %.4g min (duration not varied)", s.fixedTime/60))
	}
	return out
}

// changed returns the recipe with the candidate's grow step and the edits.
func (s *searcher) changed(c Candidate) (*recipe.Recipe, []Change) {
	var x []float64
	var ch []Change
	for _, a := range s.axes {
		v := c.get(a)
		x = append(x, v)
		switch a.dim {
		case recipe.Temperature:
			ch = append(ch, Change{Field: ParamTemperature, Text: strconv.FormatFloat(recipe.Celsius(v), 'f', 1, 64) + " C", SI: v})
		case recipe.Pressure:
			ch = append(ch, Change{Field: ParamPressure, Text: strconv.FormatFloat(v, 'f', -1, 64) + " Pa", SI: v})
		default:
			ch = append(ch, Change{Field: "flows." + a.name, Text: strconv.FormatFloat(v/gas.MolPerSCCMPerSecond, 'g', 3, 64) + " sccm", SI: v})
		}
	}
	if s.varyTime {
		ch = append(ch, Change{Field: ParamDuration, Text: strconv.FormatFloat(c.Duration/60, 'f', 2, 64) + " min", SI: c.Duration})
	}
	return s.recipeAt(x, c.Duration), ch
}

func sameCandidate(a, b Candidate) bool {
	if math.Abs(a.Temperature-b.Temperature) > 0.05 || relDiff(a.Duration, b.Duration) > 1e-3 || relDiff(a.Pressure, b.Pressure) > 1e-3 {
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

// shownIn expresses an SI value in a unit for a margin's display
// (recipe.In); NaN when there is no finite value to show.
func shownIn(si float64, unit string) float64 {
	v, err := recipe.In(si, unit)
	if err != nil {
		return math.NaN()
	}
	return v
}
