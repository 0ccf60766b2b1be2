package furnacelog

import (
	"fmt"
	"math"
	"sort"
)

// Settings of the search for where a log starts in the plan.
const (
	// locateWindow is how much of the log's beginning (s) is fitted to
	// the plan: long enough to hold a ramp's slope or a change of gases,
	// short enough that a step that ran long later on does not pull the
	// fit.
	locateWindow = 30 * 60.0
	// locateSamples bounds the samples of the window that are fitted.
	locateSamples = 600
	// locateGrid bounds the offsets tried; the grid is never finer than
	// the log's sample interval.
	locateGrid = 20000
	// minFitShare is the share of the window's samples that must fit the
	// plan (every quantity within about one tolerance) at the best
	// offset for the log to count as a log of this plan.
	minFitShare = 0.5
	// fitCap caps one quantity's squared mismatch, in tolerances², so a
	// wild reading cannot decide the offset.
	fitCap = 25.0
)

// locate returns the plan time (s) of the log's first sample: the start of
// step o.StartsAt when given, else the offset τ that minimises, over the
// first locateWindow of the log, the robust misfit
//
//	S(τ) = Σ_k Σ_q min(x_q,k(τ)², 25),  x = (logged − planned(t_k + τ)) / tolerance
//
// with q the control temperature (planned on the ramp's straight line;
// tolerance TemperatureTolerance), each logged flow (flowTolerance) and
// the pressure of set-point steps (in log ratio, tolerance
// log(1+PressureTolerance)). τ runs over [0, plan total) on a grid no
// finer than the sample interval, plus every step start; ties go to the
// earliest τ. A log whose best fit starts inside step 1 is a log of the
// whole run (τ = 0). It is an error when fewer than minFitShare of the
// samples fit at the best τ.
func (m *matcher) locate(o MatchOptions) (float64, error) {
	p, lg := m.p, m.lg
	if o.StartsAt != 0 {
		if o.StartsAt < 1 || o.StartsAt > len(p.Steps) {
			return 0, &Error{File: lg.File, Msg: fmt.Sprintf("the log is to start at step %d, but the plan has steps 1–%d", o.StartsAt, len(p.Steps)),
				Advice: "give the number of the recipe step the log starts at"}
		}
		return p.Steps[o.StartsAt-1].Start, nil
	}
	window := searchTime(lg.Time, locateWindow+1e-9)
	stride := max(1, window/locateSamples)
	var ks []int
	for k := 0; k < window; k += stride {
		ks = append(ks, k)
	}
	h := math.Max(m.dt, p.Total/locateGrid)
	var taus []float64
	for tau := 0.0; tau < p.Total; tau += h {
		taus = append(taus, tau)
	}
	for _, sp := range p.Steps {
		taus = append(taus, sp.Start)
	}
	sort.Float64s(taus)
	best, bestS := 0.0, math.Inf(1)
	for _, tau := range taus {
		if s, _ := m.misfit(ks, tau); math.IsInf(bestS, 1) || s < bestS-1e-9*math.Max(1, bestS) {
			best, bestS = tau, s
		}
	}
	if _, good := m.misfit(ks, best); float64(good) < minFitShare*float64(len(ks)) {
		_, good0 := m.misfit(ks, 0)
		return 0, &Error{File: lg.File,
			Msg: fmt.Sprintf("the log matches no part of the plan: at best %d of its first %d samples fit (%d at the plan's start); want at least %.0f %%",
				good, len(ks), good0, minFitShare*100),
			Advice: "check that the log is of this recipe, the furnace file's controller_log columns and units, and the flow readings (actual or calibration-gas)"}
	}
	if m.stepAt(best) == 0 {
		best = 0
	}
	return best, nil
}

// misfit returns S(τ) over the samples ks and how many of them fit (their
// summed squared mismatch at most 1).
func (m *matcher) misfit(ks []int, tau float64) (s float64, good int) {
	p, lg := m.p, m.lg
	j := 0
	for _, k := range ks {
		t := lg.Time[k] + tau
		for j+1 < len(p.Steps) && t >= p.Steps[j+1].Start {
			j++
		}
		sp := &p.Steps[j]
		f := 1.0
		if sp.Duration > 0 {
			f = math.Min(1, math.Max(0, (t-sp.Start)/sp.Duration))
		}
		x := (lg.T[k] - (sp.T0 + f*(sp.T1-sp.T0))) / TemperatureTolerance
		e := math.Min(x*x, fitCap)
		for i, fl := range m.flows {
			x := (fl[k] - m.set[j][i]) / m.tol[j][i]
			e += math.Min(x*x, fitCap)
		}
		if lg.P != nil && setPointPressure(sp) && lg.P[k] > 0 {
			x := math.Log(lg.P[k]/sp.Pressure) / math.Log(1+PressureTolerance)
			e += math.Min(x*x, fitCap)
		}
		s += e
		if e <= 1 {
			good++
		}
	}
	return s, good
}

// stepAt returns the index of the step that plan time t falls in (a step
// of zero duration never holds it; past the end, the last step).
func (m *matcher) stepAt(t float64) int {
	steps := m.p.Steps
	for j := len(steps) - 1; j > 0; j-- {
		if t >= steps[j].Start && steps[j].Duration > 0 {
			return j
		}
	}
	return 0
}
