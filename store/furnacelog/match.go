package furnacelog

import (
	"fmt"
	"math"
	"sort"

	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/store"
)

// Tolerances beyond which an actual value is reported as a deviation
// from plan. They are common practice for tube-furnace CVD: a
// thermocouple and controller hold about ±10 K, a pressure controller
// with a capacitance gauge about ±20 %, a thermal MFC is specified to ±1 %
// of full scale or a few % of set-point, and steps run within ±10 % of
// their planned time.
const (
	TemperatureTolerance = 10.0 // K, hold steps
	PressureTolerance    = 0.20 // of the set-point
	FlowTolerance        = 0.05 // of the set-point …
	FlowFullScale        = 0.01 // … or of the line's full scale, whichever is larger
	DurationTolerance    = 0.10 // of the planned duration
)

// minFlowTolerance is the tolerance of a flow without a line in the
// furnace file and a zero set-point: 0.1 sccm in mol/s.
var minFlowTolerance = recipe.MustParse("0.1 sccm", recipe.Flow).SI

// Result is the log matched to the plan.
type Result struct {
	Actuals    []store.Actual
	Deviations []store.Deviation
	Reached    int     // steps the log reached (the rest were not run, e.g. an aborted run)
	Span       float64 // s from the first to the last sample
	Planned    float64 // s, the plan's total
}

// Match lines the log up with the plan's steps and computes per-step
// actuals and deviations.
//
// The log's first sample is the start of step 1 (t = 0). Each next step
// boundary is searched near where the plan puts it, measured from the
// boundary found before (so a run that is offset or stretched step by step
// is followed): within ±max(60 s, half the longer of the two steps) the
// boundary goes where the samples before it best fit the earlier step's
// set-points and those after it the later step's (flows, pressure, and
// the hold temperature or ramp range; each mismatch in units of its
// tolerance, capped). Where two steps look alike the planned time is
// kept. The last step the log reaches ends at the last sample; a step it
// ends inside is not judged on its duration.
func Match(p *recipe.Plan, lg *Log) Result {
	res := Result{Planned: p.Total}
	n := len(lg.Time)
	if n == 0 || len(p.Steps) == 0 {
		return res
	}
	res.Span = lg.Time[n-1]
	gases := sortedGases(lg)
	dt := sampleInterval(lg.Time)
	// bounds[j] is the first sample index of step j; bounds[K] = n.
	K := len(p.Steps)
	bounds := make([]int, K+1)
	startT := make([]float64, K+1)
	bounds[K] = n
	for j := 1; j < K; j++ {
		prev := startT[j-1]
		pred := prev + p.Steps[j-1].Duration
		w := math.Max(60, 0.5*math.Max(p.Steps[j-1].Duration, p.Steps[j].Duration))
		if p.Steps[j-1].Duration == 0 {
			w = 0
		}
		lo := searchTime(lg.Time, math.Max(prev, pred-w))
		hi := searchTime(lg.Time, pred+w)
		lo = max(lo, bounds[j-1])
		best, bestCost := searchTime(lg.Time, pred), math.Inf(1)
		if hi > lo {
			// Prefix sums of both steps' costs. A boundary at sample k gives
			// step j-1 the samples [lo, k) and step j the samples of its
			// planned length after k, so a short step j is not charged for
			// the samples of the steps after it.
			durJ := p.Steps[j].Duration
			top := min(n, searchTime(lg.Time, timeAt(lg, hi)+durJ)+1)
			a := make([]float64, top-lo+1)
			b := make([]float64, top-lo+1)
			for k := lo; k < top; k++ {
				a[k-lo+1] = a[k-lo] + cost(p, j-1, lg, k, gases, prev)
				b[k-lo+1] = b[k-lo] + cost(p, j, lg, k, gases, pred)
			}
			for k := lo; k <= hi; k++ {
				end := min(top, max(k+1, searchTime(lg.Time, timeAt(lg, k)+durJ)))
				c := a[k-lo] + b[end-lo] - b[k-lo]
				// ties go to the planned time
				if c < bestCost-1e-9 || math.Abs(c-bestCost) <= 1e-9 && math.Abs(timeAt(lg, k)-pred) < math.Abs(timeAt(lg, best)-pred) {
					best, bestCost = k, c
				}
			}
		}
		bounds[j] = best
		startT[j] = timeAt(lg, best)
		if best >= n {
			startT[j] = pred
		}
	}
	for j := range p.Steps {
		if bounds[j] >= n {
			break
		}
		res.Reached = j + 1
	}
	for j := 0; j < res.Reached; j++ {
		sp := &p.Steps[j]
		lo, hi := bounds[j], bounds[j+1]
		if hi <= lo {
			hi = lo + 1
		}
		last := j == res.Reached-1
		end := timeAt(lg, hi)
		if last {
			end = lg.Time[n-1]
		}
		dur := end - timeAt(lg, lo)
		label := sp.Label
		add := func(a store.Actual) { a.Step, a.Label = j+1, label; res.Actuals = append(res.Actuals, a) }
		dev := func(q, unit string, planned, actual, tol float64, format string, args ...any) {
			res.Deviations = append(res.Deviations, store.Deviation{Step: j + 1, Label: label, Quantity: q, Unit: unit,
				Planned: planned, Actual: actual, Tolerance: tol, Message: fmt.Sprintf(format, args...)})
		}
		add(store.Actual{Quantity: "start", Unit: "s", Planned: store.Optional(sp.Start), Mean: timeAt(lg, lo), Min: timeAt(lg, lo), Max: timeAt(lg, lo), Samples: 1})
		add(store.Actual{Quantity: "duration", Unit: "s", Planned: store.Optional(sp.Duration), Mean: dur, Min: dur, Max: dur, Samples: hi - lo})
		cutShort := last && res.Reached < K                   // the log ends inside this step
		dtol := math.Max(DurationTolerance*sp.Duration, 2*dt) // a boundary is known to a sample either side
		if sp.Duration > 0 && !cutShort && math.Abs(dur-sp.Duration) > dtol {
			dev("duration", "s", sp.Duration, dur, dtol, "took %.1f min, planned %.1f min (±%.0f %%)", dur/60, sp.Duration/60, DurationTolerance*100)
		}
		// temperature
		st := stats(lg.T[lo:hi])
		hold := sp.T0 == sp.T1 && (sp.Step.Kind == recipe.KindAnneal || sp.Step.Kind == recipe.KindGrow)
		add(store.Actual{Quantity: "temperature", Unit: "K", Planned: store.Optional(sp.MeanTemperature()), Mean: st.mean, Min: st.min, Max: st.max, Samples: st.n})
		if hold {
			worst := st.max
			if sp.T0-st.min > st.max-sp.T0 {
				worst = st.min
			}
			if math.Abs(worst-sp.T0) > TemperatureTolerance {
				dev("temperature", "K", sp.T0, worst, TemperatureTolerance, "temperature reached %.1f °C, set %.1f °C (±%.0f K)", recipe.Celsius(worst), recipe.Celsius(sp.T0), TemperatureTolerance)
			}
		}
		// pressure
		if lg.P != nil {
			ps := stats(lg.P[lo:hi])
			planned := store.None()
			if !sp.OpenToPump && sp.Pressure > 0 && sp.Step.Kind != recipe.KindLeakCheck { // pressure rises during a leak check
				planned = store.Optional(sp.Pressure)
				if math.Abs(ps.mean-sp.Pressure) > PressureTolerance*sp.Pressure {
					dev("pressure", "Pa", sp.Pressure, ps.mean, PressureTolerance*sp.Pressure, "mean pressure %s, set %s (±%.0f %%)", torr(ps.mean), torr(sp.Pressure), PressureTolerance*100)
				}
			}
			add(store.Actual{Quantity: "pressure", Unit: "Pa", Planned: planned, Mean: ps.mean, Min: ps.min, Max: ps.max, Samples: ps.n})
		}
		// flows
		for _, g := range gases {
			fs := stats(lg.Flows[g][lo:hi])
			set := setPoint(sp, g)
			tol := flowTolerance(p.Furnace, g, set)
			add(store.Actual{Quantity: "flow:" + g, Unit: "mol/s", Planned: store.Optional(set), Mean: fs.mean, Min: fs.min, Max: fs.max, Samples: fs.n})
			if math.Abs(fs.mean-set) > tol {
				dev("flow:"+g, "mol/s", set, fs.mean, tol, "%s mean flow %.3g sccm, set %.3g sccm (±%.2g sccm)", g, sccm(fs.mean), sccm(set), sccm(tol))
			}
		}
	}
	if res.Reached < K {
		res.Deviations = append(res.Deviations, store.Deviation{Step: res.Reached + 1, Label: p.Steps[res.Reached].Label, Quantity: "reached",
			Planned: float64(K), Actual: float64(res.Reached), Message: fmt.Sprintf("the log ends in step %d of %d; steps from %s on were not run", res.Reached, K, p.Steps[res.Reached].Label)})
	}
	return res
}

func timeAt(lg *Log, k int) float64 {
	if k >= len(lg.Time) {
		return lg.Time[len(lg.Time)-1]
	}
	return lg.Time[k]
}

// searchTime returns the index of the first sample at or after t.
func searchTime(ts []float64, t float64) int {
	lo, hi := 0, len(ts)
	for lo < hi {
		m := (lo + hi) / 2
		if ts[m] < t {
			lo = m + 1
		} else {
			hi = m
		}
	}
	return lo
}

// cost is how badly sample k fits step j's set-points: each mismatch in
// units of its tolerance, capped at 25 so that one wild reading cannot
// outweigh many good ones, yet a flow well off its set-point still tells
// two steps apart; readings within half a tolerance cost nothing. A ramp is judged against its straight line from
// start (the step's estimated start time), so a ramp up does not also fit
// the samples of a cool-down through the same range.
func cost(p *recipe.Plan, j int, lg *Log, k int, gases []string, start float64) float64 {
	sp := &p.Steps[j]
	c := 0.0
	// Within half a tolerance a reading costs nothing, so noise does not
	// pull a boundary; ties then go to the planned time.
	term := func(x float64) float64 { return math.Min(25, math.Max(0, math.Abs(x)-0.5)) }
	for _, g := range gases {
		set := setPoint(sp, g)
		c += term((lg.Flows[g][k] - set) / flowTolerance(p.Furnace, g, set))
	}
	if lg.P != nil && !sp.OpenToPump && sp.Pressure > 0 && lg.P[k] > 0 && sp.Step.Kind != recipe.KindLeakCheck {
		c += term(math.Log(lg.P[k]/sp.Pressure) / math.Log(1+PressureTolerance))
	}
	lo, hi := math.Min(sp.T0, sp.T1), math.Max(sp.T0, sp.T1)
	T := lg.T[k]
	if sp.T0 != sp.T1 && sp.Duration > 0 {
		f := math.Min(1, math.Max(0, (lg.Time[k]-start)/sp.Duration))
		want := sp.T0 + f*(sp.T1-sp.T0)
		return c + term((T-want)/(2*TemperatureTolerance))
	}
	switch {
	case T < lo:
		c += term((lo - T) / TemperatureTolerance)
	case T > hi:
		c += term((T - hi) / TemperatureTolerance)
	}
	return c
}

func setPoint(sp *recipe.StepPlan, gas string) float64 {
	for _, f := range sp.Flows {
		if f.Gas.Symbol == gas {
			return f.Molar
		}
	}
	return 0
}

func flowTolerance(f *recipe.Furnace, gas string, set float64) float64 {
	tol := math.Max(FlowTolerance*set, minFlowTolerance)
	if f != nil {
		if l := f.LineFor(gas); l != nil {
			tol = math.Max(tol, FlowFullScale*l.FullScaleOfGas())
		}
	}
	return tol
}

type summary struct {
	n              int
	mean, min, max float64
}

func stats(v []float64) summary {
	s := summary{n: len(v), min: math.Inf(1), max: math.Inf(-1)}
	if len(v) == 0 {
		return summary{mean: math.NaN(), min: math.NaN(), max: math.NaN()}
	}
	sum := 0.0
	for _, x := range v {
		sum += x
		s.min, s.max = math.Min(s.min, x), math.Max(s.max, x)
	}
	s.mean = sum / float64(len(v))
	return s
}

func sortedGases(lg *Log) []string {
	var gs []string
	for g := range lg.Flows {
		gs = append(gs, g)
	}
	sort.Strings(gs)
	return gs
}

var sccmPerMol = 1 / recipe.MustParse("1 sccm", recipe.Flow).SI

func sccm(molPerS float64) float64 { return molPerS * sccmPerMol }

func torr(pa float64) string {
	v, _ := recipe.ConvertTo(pa, "Torr")
	if v < 1 {
		return fmt.Sprintf("%.3g mTorr", v*1000)
	}
	return fmt.Sprintf("%.3g Torr", v)
}

// sampleInterval returns the median time between samples.
func sampleInterval(ts []float64) float64 {
	if len(ts) < 2 {
		return 0
	}
	d := make([]float64, len(ts)-1)
	for i := range d {
		d[i] = ts[i+1] - ts[i]
	}
	sort.Float64s(d)
	return d[len(d)/2]
}
