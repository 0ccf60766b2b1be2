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
// their planned time. A step open to the pump holds the pressure the pump
// reaches with the step's throughput only to within the pump model's
// accuracy (pumping speed and line conductance from data sheets), about
// ±50 %.
const (
	TemperatureTolerance = 10.0 // K, hold steps
	PressureTolerance    = 0.20 // of the set-point
	PumpTolerance        = 0.50 // of the pump-limited pressure
	FlowTolerance        = 0.05 // of the set-point …
	FlowFullScale        = 0.01 // … or of the line's full scale, whichever is larger
	DurationTolerance    = 0.10 // of the planned duration
)

// minFlowTolerance is the tolerance of a flow without a line in the
// furnace file and a zero set-point: 0.1 sccm in mol/s.
var minFlowTolerance = recipe.MustParse("0.1 sccm", recipe.Flow).SI

// Deviation quantities a caller may branch on.
const (
	// QuantityLeakCheck names a failed (or unjudgeable) leak check, an
	// error-level deviation.
	QuantityLeakCheck = "leak-check"
	// QuantityReached names a log that ends before the plan does.
	QuantityReached = "reached"
)

// IsError reports whether a deviation is error-level: a leak check that
// failed or could not be judged. Other deviations are warnings.
func IsError(d store.Deviation) bool { return d.Quantity == QuantityLeakCheck }

// MatchOptions tune Match. The zero value finds where the log starts.
type MatchOptions struct {
	// StartsAt is the 1-based step whose start is the log's first sample;
	// 0 finds it from the log.
	StartsAt int
}

// Result is the log matched to the plan.
type Result struct {
	Actuals    []store.Actual
	Deviations []store.Deviation
	First      int     // 1-based first step the log covers (steps before it were not logged)
	Reached    int     // steps up to the last the log reached (the rest were not run, e.g. an aborted run)
	Offset     float64 // s of plan time at the log's first sample
	Span       float64 // s from the first to the last sample
	Planned    float64 // s, the plan's total
	Steps      int     // steps in the plan
}

// Coverage says which steps the log covers: "log covers steps 4–9; 1–3
// not logged".
func (r Result) Coverage() string {
	s := fmt.Sprintf("log covers steps %s", stepRange(r.First, r.Reached))
	if r.First > 1 {
		s += fmt.Sprintf("; %s not logged", stepRange(1, r.First-1))
	}
	if r.Reached < r.Steps {
		s += fmt.Sprintf("; %s not reached", stepRange(r.Reached+1, r.Steps))
	}
	return s
}

func stepRange(a, b int) string {
	if a == b {
		return fmt.Sprintf("%d", a)
	}
	return fmt.Sprintf("%d–%d", a, b)
}

// Match lines the log up with the plan's steps and computes per-step
// actuals and deviations.
//
// First it finds where in the plan the log starts (see locate; or at the
// start of step o.StartsAt): a log may cover only part of the run, and
// the steps before its first sample are not logged and not judged. From
// there each next step boundary is searched near where the plan puts it,
// measured from the boundary found before (so a run that is offset or
// stretched step by step is followed): within ±max(60 s, half the longer
// of the two steps) the boundary goes where the samples before it best
// fit the earlier step's set-points and those after it the later step's
// (flows, pressure, and the hold temperature or ramp range; each mismatch
// in units of its tolerance, capped). Where two steps look alike the
// planned time is kept. The last step the log reaches ends at the last
// sample; a step the log starts or ends inside is not judged on its
// duration. A log that fits no part of the plan is an error.
func Match(p *recipe.Plan, lg *Log, o MatchOptions) (Result, error) {
	K := len(p.Steps)
	res := Result{Planned: p.Total, Steps: K, First: 1}
	n := len(lg.Time)
	if n == 0 || K == 0 {
		return res, nil
	}
	res.Span = lg.Time[n-1]
	m := newMatcher(p, lg)
	offset, err := m.locate(o)
	if err != nil {
		return res, err
	}
	first := m.stepAt(offset)
	res.Offset, res.First = offset, first+1
	bounds := m.boundaries(first, p.Steps[first].Start-offset)
	res.Reached = first + 1
	for j := first + 1; j < K && bounds[j] < n; j++ {
		res.Reached = j + 1
	}
	for j := first; j < res.Reached; j++ {
		lo, hi := bounds[j], bounds[j+1]
		if hi <= lo {
			hi = lo + 1
		}
		cut := j == first && offset > p.Steps[j].Start+m.dt || j == res.Reached-1 && res.Reached < K
		end := timeAt(lg, hi)
		if j == res.Reached-1 {
			end = lg.Time[n-1]
		}
		m.judge(&res, j, lo, min(hi, n), end, cut)
	}
	if res.Reached < K {
		res.Deviations = append(res.Deviations, store.Deviation{Step: res.Reached + 1, Label: p.Steps[res.Reached].Label, Quantity: QuantityReached,
			Planned: float64(K), Actual: float64(res.Reached), Message: fmt.Sprintf("the log ends in step %d of %d; steps from %s on were not run", res.Reached, K, p.Steps[res.Reached].Label)})
	}
	return res, nil
}

// matcher holds what the matching of one log to one plan shares.
type matcher struct {
	p     *recipe.Plan
	lg    *Log
	gases []string
	flows [][]float64 // the logged flows, in the order of gases
	set   [][]float64 // set[j][i]: step j's set-point of gases[i], mol/s
	tol   [][]float64 // tol[j][i]: its tolerance, mol/s
	dt    float64     // median sample interval, s
}

func newMatcher(p *recipe.Plan, lg *Log) *matcher {
	m := &matcher{p: p, lg: lg, gases: sortedGases(lg), dt: sampleInterval(lg.Time)}
	for _, g := range m.gases {
		m.flows = append(m.flows, lg.Flows[g])
	}
	m.set = make([][]float64, len(p.Steps))
	m.tol = make([][]float64, len(p.Steps))
	for j := range p.Steps {
		for _, g := range m.gases {
			set := setPoint(&p.Steps[j], g)
			m.set[j] = append(m.set[j], set)
			m.tol[j] = append(m.tol[j], flowTolerance(p.Furnace, g, set))
		}
	}
	return m
}

// boundaries returns the first sample index of each step from first on
// (bounds[K] = n); start is the log time at which step first begins
// (negative when the log starts inside it).
func (m *matcher) boundaries(first int, start float64) []int {
	p, lg := m.p, m.lg
	n, K := len(lg.Time), len(p.Steps)
	bounds := make([]int, K+1)
	startT := make([]float64, K+1)
	bounds[K] = n
	startT[first] = start
	for j := first + 1; j < K; j++ {
		prev := startT[j-1]
		pred := prev + p.Steps[j-1].Duration
		w := math.Max(60, 0.5*math.Max(p.Steps[j-1].Duration, p.Steps[j].Duration))
		if p.Steps[j-1].Duration == 0 {
			w = 0
		}
		lo := max(searchTime(lg.Time, math.Max(prev, pred-w)), bounds[j-1])
		hi := searchTime(lg.Time, pred+w)
		best := m.boundary(j, lo, hi, prev, pred)
		bounds[j] = best
		startT[j] = timeAt(lg, best)
		if best >= n {
			startT[j] = pred
		}
	}
	return bounds
}

// boundary returns the sample in [lo, hi] where step j most likely
// begins, step j-1 having begun at log time prev and j planned at pred.
//
// Every candidate k is charged over the same samples [lo, top), top the
// end of step j's planned length after the latest candidate: step j-1
// the samples [lo, k), step j those of its planned length after k (so a
// short step j is not charged for the samples of the steps after it),
// and each later sample the cheaper of its two costs, as j-1 or as j:
// where step j ends is the next boundary's question. Charged over
// different samples, a candidate that left step j-1 fewer of its samples
// would look cheaper whenever step j-1 ran off its set-points, and a
// short step j would start too early.
func (m *matcher) boundary(j, lo, hi int, prev, pred float64) int {
	lg := m.lg
	n := len(lg.Time)
	best, bestCost := searchTime(lg.Time, pred), math.Inf(1)
	if hi <= lo {
		return best
	}
	durJ := m.p.Steps[j].Duration
	end := func(k int) int { return min(n, max(k+1, searchTime(lg.Time, timeAt(lg, k)+durJ))) }
	top := end(hi)
	// Prefix sums of the costs as step j-1, as step j and the cheaper.
	a := make([]float64, top-lo+1)
	b := make([]float64, top-lo+1)
	c := make([]float64, top-lo+1)
	for k := lo; k < top; k++ {
		ca, cb := m.cost(j-1, k, prev), m.cost(j, k, pred)
		a[k-lo+1] = a[k-lo] + ca
		b[k-lo+1] = b[k-lo] + cb
		c[k-lo+1] = c[k-lo] + math.Min(ca, cb)
	}
	for k := lo; k <= hi; k++ {
		e := end(k) - lo
		cost := a[k-lo] + b[e] - b[k-lo] + c[top-lo] - c[e]
		// ties go to the planned time
		if cost < bestCost-1e-9 || math.Abs(cost-bestCost) <= 1e-9 && math.Abs(timeAt(lg, k)-pred) < math.Abs(timeAt(lg, best)-pred) {
			best, bestCost = k, cost
		}
	}
	return best
}

func timeAt(lg *Log, k int) float64 {
	if k >= len(lg.Time) {
		return lg.Time[len(lg.Time)-1]
	}
	return lg.Time[k]
}

// searchTime returns the index of the first sample at or after t.
func searchTime(ts []float64, t float64) int {
	return sort.SearchFloat64s(ts, t)
}

// cost is how badly sample k fits step j's set-points: each mismatch in
// units of its tolerance, capped at 25 so that one wild reading cannot
// outweigh many good ones, yet a flow well off its set-point still tells
// two steps apart; readings within half a tolerance cost nothing. A ramp
// is judged against its straight line from start (the step's estimated
// start time, log time), so a ramp up does not also fit the samples of a
// cool-down through the same range.
func (m *matcher) cost(j, k int, start float64) float64 {
	sp, lg := &m.p.Steps[j], m.lg
	c := 0.0
	// Within half a tolerance a reading costs nothing, so noise does not
	// pull a boundary; ties then go to the planned time.
	term := func(x float64) float64 { return math.Min(25, math.Max(0, math.Abs(x)-0.5)) }
	for i, f := range m.flows {
		c += term((f[k] - m.set[j][i]) / m.tol[j][i])
	}
	if lg.P != nil && setPointPressure(sp) && lg.P[k] > 0 {
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

// setPointPressure reports whether a step holds a pressure set-point
// (not open to the pump, not a leak check, whose pressure rises, not a
// cycle purge, whose pressure swings).
func setPointPressure(sp *recipe.StepPlan) bool {
	return !sp.OpenToPump && sp.Pressure > 0 && sp.Step.Kind != recipe.KindLeakCheck && sp.Step.Kind != recipe.KindVent && sp.Step.Cycles == 0
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
	v, _ := recipe.In(pa, "Torr")
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
