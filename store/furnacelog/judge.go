package furnacelog

import (
	"fmt"
	"math"

	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/store"
)

// minLeakSamples is the fewest samples a leak-check step needs for its
// rise rate to be fitted.
const minLeakSamples = 3

// stepJudge collects the actuals and deviations of one step.
type stepJudge struct {
	res   *Result
	sp    *recipe.StepPlan
	step  int // 1-based
	label string
}

func (s *stepJudge) add(a store.Actual) {
	a.Step, a.Label = s.step, s.label
	s.res.Actuals = append(s.res.Actuals, a)
}

func (s *stepJudge) dev(q, unit string, planned, actual, tol float64, format string, args ...any) {
	s.res.Deviations = append(s.res.Deviations, store.Deviation{Step: s.step, Label: s.label, Quantity: q, Unit: unit,
		Planned: planned, Actual: actual, Tolerance: tol, Message: fmt.Sprintf(format, args...)})
}

func (s *stepJudge) summary(q, unit string, planned store.Optional, st summary) {
	s.add(store.Actual{Quantity: q, Unit: unit, Planned: planned, Mean: st.mean, Min: st.min, Max: st.max, Samples: st.n})
}

// judge adds step j's actuals and deviations: the samples [lo, hi), the
// step ending at log time end; cut marks a step the log starts or ends
// inside, not judged on its duration.
func (m *matcher) judge(res *Result, j, lo, hi int, end float64, cut bool) {
	sp, lg := &m.p.Steps[j], m.lg
	s := &stepJudge{res: res, sp: sp, step: j + 1, label: sp.Label}
	start := timeAt(lg, lo) + res.Offset // plan time
	dur := end - timeAt(lg, lo)
	s.add(store.Actual{Quantity: "start", Unit: "s", Planned: store.Optional(sp.Start), Mean: start, Min: start, Max: start, Samples: 1})
	s.add(store.Actual{Quantity: "duration", Unit: "s", Planned: store.Optional(sp.Duration), Mean: dur, Min: dur, Max: dur, Samples: hi - lo})
	dtol := math.Max(DurationTolerance*sp.Duration, 2*m.dt) // a boundary is known to a sample either side
	if sp.Duration > 0 && !cut && math.Abs(dur-sp.Duration) > dtol {
		s.dev("duration", "s", sp.Duration, dur, dtol, "took %.1f min, planned %.1f min (±%.0f %%)", dur/60, sp.Duration/60, DurationTolerance*100)
	}
	m.temperature(s, lo, hi)
	if lg.P != nil {
		m.pressure(s, lo, hi)
	}
	for i, g := range m.gases {
		fs := stats(m.flows[i][lo:hi])
		set, tol := m.set[j][i], m.tol[j][i]
		s.summary("flow:"+g, "mol/s", store.Optional(set), fs)
		if math.Abs(fs.mean-set) > tol {
			s.dev("flow:"+g, "mol/s", set, fs.mean, tol, "%s mean flow %.3g sccm, set %.3g sccm (±%.2g sccm)", g, sccm(fs.mean), sccm(set), sccm(tol))
		}
	}
}

// temperature judges the control thermocouple against a hold's set-point
// and reports the other thermocouples and the spread along the tube (the
// mean over the step's samples of the highest less the lowest reading).
func (m *matcher) temperature(s *stepJudge, lo, hi int) {
	sp, lg := s.sp, m.lg
	st := stats(lg.T[lo:hi])
	s.summary("temperature", "K", store.Optional(sp.MeanTemperature()), st)
	if sp.T0 == sp.T1 && (sp.Step.Kind == recipe.KindAnneal || sp.Step.Kind == recipe.KindGrow) {
		worst := st.max
		if sp.T0-st.min > st.max-sp.T0 {
			worst = st.min
		}
		if math.Abs(worst-sp.T0) > TemperatureTolerance {
			s.dev("temperature", "K", sp.T0, worst, TemperatureTolerance, "temperature reached %.1f °C, set %.1f °C (±%.0f K)", recipe.Celsius(worst), recipe.Celsius(sp.T0), TemperatureTolerance)
		}
	}
	if len(lg.Thermocouples) == 0 {
		return
	}
	spread := make([]float64, 0, hi-lo)
	for k := lo; k < hi; k++ {
		a, b := lg.T[k], lg.T[k]
		for _, tc := range lg.Thermocouples {
			a, b = math.Min(a, tc.T[k]), math.Max(b, tc.T[k])
		}
		spread = append(spread, b-a)
	}
	for _, tc := range lg.Thermocouples {
		s.summary("thermocouple:"+tc.Column, "K", store.None(), stats(tc.T[lo:hi]))
	}
	s.summary("temperature spread", "K", store.None(), stats(spread))
}

// pressure judges the step's logged pressure against the plan: a
// set-point within PressureTolerance (mean over the step); a step open to
// the pump within PumpTolerance of the pump-limited pressure (or the
// gauge's lower limit, if higher); a pump-down must end within
// PumpTolerance above its target; a vent must end within
// PressureTolerance of its pressure; a leak check's rise rate must not
// exceed its max_rise (see leakCheck).
func (m *matcher) pressure(s *stepJudge, lo, hi int) {
	sp, lg := s.sp, m.lg
	ps := stats(lg.P[lo:hi])
	last := lg.P[hi-1]
	planned := store.None()
	switch {
	case sp.Step.Kind == recipe.KindLeakCheck:
		m.leakCheck(s, lo, hi)
	case sp.Step.Kind == recipe.KindPump:
		target := math.Max(math.Max(sp.Step.Until.SI, sp.PumpLimit), m.gaugeMin())
		planned = store.Optional(target)
		if last > (1+PumpTolerance)*target {
			s.dev("pressure", "Pa", target, last, PumpTolerance*target, "pumped down to %s, planned %s (+%.0f %%)", torr(last), torr(target), PumpTolerance*100)
		}
	case sp.Step.Kind == recipe.KindVent:
		planned = store.Optional(sp.Pressure)
		if math.Abs(last-sp.Pressure) > PressureTolerance*sp.Pressure {
			s.dev("pressure", "Pa", sp.Pressure, last, PressureTolerance*sp.Pressure, "vented to %s, planned %s (±%.0f %%)", torr(last), torr(sp.Pressure), PressureTolerance*100)
		}
	case sp.OpenToPump && sp.Step.Cycles == 0:
		want := math.Max(sp.PumpLimit, m.gaugeMin())
		planned = store.Optional(want)
		if math.Abs(ps.mean-want) > PumpTolerance*want {
			s.dev("pressure", "Pa", want, ps.mean, PumpTolerance*want, "mean pressure %s, the pump holds about %s with this flow (±%.0f %%)", torr(ps.mean), torr(want), PumpTolerance*100)
		}
	case setPointPressure(sp):
		planned = store.Optional(sp.Pressure)
		if math.Abs(ps.mean-sp.Pressure) > PressureTolerance*sp.Pressure {
			s.dev("pressure", "Pa", sp.Pressure, ps.mean, PressureTolerance*sp.Pressure, "mean pressure %s, set %s (±%.0f %%)", torr(ps.mean), torr(sp.Pressure), PressureTolerance*100)
		}
	}
	s.summary("pressure", "Pa", planned, ps)
}

func (m *matcher) gaugeMin() float64 {
	if m.p.Furnace == nil {
		return 0
	}
	return m.p.Furnace.Vacuum.GaugeMin.SI
}

// leakCheck fits the rise rate of a leak-check step by least squares over
// its samples,
//
//	rate = Σ (t_k − t̄)(p_k − p̄) / Σ (t_k − t̄)²,
//
// leaving out the sample at either end when it has enough (a boundary
// is known to a sample either side), and reports a rate above the step's max_rise, or a step with fewer than
// minLeakSamples samples, as an error-level deviation (QuantityLeakCheck).
func (m *matcher) leakCheck(s *stepJudge, lo, hi int) {
	lg, maxRise := m.lg, s.sp.Step.MaxRise.SI
	if hi-lo < minLeakSamples {
		s.dev(QuantityLeakCheck, "Pa/s", maxRise, math.NaN(), 0, "leak check not judged: the log has %s in the step, want at least %d", samples(hi-lo), minLeakSamples)
		return
	}
	a, b := lo, hi
	if hi-lo >= minLeakSamples+2 {
		a, b = lo+1, hi-1 // a boundary is known to a sample either side
	}
	rate := slope(lg.Time[a:b], lg.P[a:b])
	s.add(store.Actual{Quantity: "pressure rise", Unit: "Pa/s", Planned: store.Optional(maxRise), Mean: rate, Min: rate, Max: rate, Samples: hi - lo})
	if rate > maxRise {
		s.dev(QuantityLeakCheck, "Pa/s", maxRise, rate, 0, "leak check failed: pressure rose %s/min over the step, pass figure %s/min", torr(rate*60), torr(maxRise*60))
	}
}

// slope returns the least-squares slope of y against x (NaN for fewer
// than two distinct x).
func slope(x, y []float64) float64 {
	n := float64(len(x))
	mx, my := 0.0, 0.0
	for i := range x {
		mx += x[i]
		my += y[i]
	}
	mx, my = mx/n, my/n
	sxy, sxx := 0.0, 0.0
	for i := range x {
		sxy += (x[i] - mx) * (y[i] - my)
		sxx += (x[i] - mx) * (x[i] - mx)
	}
	if sxx == 0 {
		return math.NaN()
	}
	return sxy / sxx
}

func samples(n int) string {
	if n == 1 {
		return "1 sample"
	}
	return fmt.Sprintf("%d samples", n)
}
