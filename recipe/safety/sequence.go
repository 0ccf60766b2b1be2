package safety

import (
	"fmt"
	"math"
	"strings"

	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/recipe/gas"
)

// tube is the gas in the tube as the recipe runs: pressure and the O2 and
// fuel fractions, well mixed.
type tube struct {
	P, O2, Fuel float64
	LFL         float64 // fuel-basis LFL of the fuel last admitted
}

// fill raises the tube from its pressure to P with a feed holding o2 and
// fuel fractions: what was there is diluted by P0/P.
func (t *tube) fill(P, o2, fuel float64) {
	if P > t.P && P > 0 {
		r := t.P / P
		t.O2 = t.O2*r + o2*(1-r)
		t.Fuel = t.Fuel*r + fuel*(1-r)
	}
	t.P = P
}

// sweep applies N volume changes of a feed: y → y_feed + (y − y_feed)·e^−N.
func (t *tube) sweep(N, o2, fuel float64) {
	e := SweepFraction(N)
	t.O2 = o2 + (t.O2-o2)*e
	t.Fuel = fuel + (t.Fuel-fuel)*e
}

// feedOf returns the O2 and fuel fractions of a step's feed.
func feedOf(fs []recipe.FlowPlan) (o2, fuel float64) {
	total := 0.0
	for _, f := range fs {
		total += f.Molar
	}
	if total == 0 {
		return 0, 0
	}
	for _, f := range fs {
		o2 += f.Molar / total * f.Gas.OxygenFraction
		if f.Gas.Flammable {
			fuel += f.Molar / total
		}
	}
	return o2, fuel
}

// inertOnly reports whether a step's flows are all inert (and some flow).
func inertOnly(sp *recipe.StepPlan) bool {
	if sp.TotalFlow <= 0 {
		return false
	}
	for _, f := range sp.Flows {
		if f.Molar > 0 && f.Gas.Role != gas.Inert {
			return false
		}
	}
	return true
}

// runsHot reports which fuels of the run meet a temperature at or above
// their autoignition point, and the first step where that happens.
func (a *analysis) runsHot() (names []string, first *recipe.StepPlan) {
	seen := map[string]bool{}
	for i := range a.p.Steps {
		sp := &a.p.Steps[i]
		for _, g := range a.r.Steps[i].AboveAIT {
			if !seen[g] {
				seen[g] = true
				names = append(names, g)
			}
			if first == nil {
				first = sp
			}
		}
	}
	return names, first
}

// sequence follows the tube's gas through the recipe: leak check and purge
// before the first fuel, purge before vent, venting hot, cooling under H2.
func (a *analysis) sequence() {
	st := sequenceState{
		sev:             a.autoignition(),
		t:               tube{P: gas.StandardAtmosphere, O2: airOxygen},
		purgedSinceFuel: true,
		minFuelFlow:     math.Inf(1),
	}
	for i := range a.p.Steps {
		a.sequenceStep(&st, i)
	}
	a.sequenceEnd(&st)
}

// sequenceState is what sequence carries from step to step.
type sequenceState struct {
	sev             Severity // of the rules before the first fuel: Stop when a fuel meets its AIT
	t               tube
	leak            bool    // a leak check has been done
	purged          bool    // an inert purge has been done
	fuelSeen        bool    // a flammable gas has flowed
	purgedSinceFuel bool    // an inert purge since the last flammable gas (or none yet)
	minFuelFlow     float64 // smallest total flow of a flammable step, mol/s
}

// autoignition notes the first step where a fuel meets its autoignition
// temperature and returns the severity of the sequence rules: Stop then,
// else Warning (the rules still apply, less urgently).
func (a *analysis) autoignition() Severity {
	hotFuels, hotStep := a.runsHot()
	if hotStep == nil {
		return Warning
	}
	var parts []string
	for _, g := range hotFuels {
		gg, _ := gas.Lookup(g)
		_, _, ait := a.limits(gg)
		parts = append(parts, fmt.Sprintf("%s %.0f °C", g, recipe.Celsius(ait)))
	}
	a.add(Note, hotStep, "ignition.autoignition", "keep air out of the hot tube: leak check, purge, and keep a positive inert flow on any opening",
		"flammable gas meets %.0f °C, above its autoignition temperature (%s, %s): air reaching the hot zone ignites it without a spark",
		recipe.Celsius(hotStep.MaxTemperature()), strings.Join(parts, ", "), a.r.Compilation)
	return Stop
}

// sequenceStep follows the tube's gas through step i and judges the
// moments that matter: the first fuel, the vent, a cool under H2.
func (a *analysis) sequenceStep(st *sequenceState, i int) {
	sp := &a.p.Steps[i]
	s := sp.Step
	o2f, fuelf := feedOf(sp.Flows)
	P := sp.Pressure
	if s.Kind == recipe.KindPump && !s.Until.IsZero() {
		P = math.Max(P, s.Until.SI)
	}
	if sp.Flammable {
		st.minFuelFlow = math.Min(st.minFuelFlow, sp.TotalFlow)
	}
	// The O2 the fuel meets, once the step is at its pressure.
	if sp.Flammable && !st.fuelSeen {
		st.fuelSeen = true
		probe := st.t
		probe.fill(P, o2f, fuelf)
		a.r.FirstFuelStep, a.r.OxygenAtFuel = sp.Index+1, probe.O2
		a.firstFuel(sp, st.sev, st.leak, st.purged, probe.O2)
	}
	switch {
	case s.Kind == recipe.KindLeakCheck:
		if !st.leak {
			a.r.LeakCheckStep, a.r.LeakCheckPass, a.r.LeakCheckTime = sp.Index+1, s.MaxRise.String(), s.Duration.String()
		}
		st.leak = true
	case s.Kind == recipe.KindPurge && s.Cycles > 0:
		a.cyclePurge(&st.t, sp, o2f, fuelf)
	case sp.TotalFlow > 0:
		a.flowThrough(&st.t, sp, P, o2f, fuelf)
	default:
		st.t.P = P
	}
	if s.Kind == recipe.KindPurge && inertOnly(sp) {
		st.purged = true
		st.purgedSinceFuel = true
	}
	if sp.Flammable {
		st.purgedSinceFuel = false
		st.t.LFL = a.r.Steps[i].LFL
	}
	if s.Kind == recipe.KindVent {
		a.vent(sp, st.t, st.purgedSinceFuel, st.fuelSeen)
	}
	if s.Kind == recipe.KindCool && sp.PH2 > 0 && !sp.OpenToPump && sp.Pressure >= 0.5*gas.StandardAtmosphere {
		a.add(Warning, sp, "sequence.cool-under-h2", "keep the flows on through the cool-down, check the exhaust cannot draw air back (bubbler or check valve), or cool under argon",
			"cooling under hydrogen at %.0f kPa: the gas contracts as the tube cools and an atmospheric-pressure tube can draw air in through a leak or the exhaust while H2 and hot copper are present",
			sp.Pressure/1000).num("H2 partial pressure", sp.PH2/1000, "kPa")
	}
}

// cyclePurge runs the pump-and-backfill cycles of purge step sp on the
// tube and records the purge. Each cycle pumps to P_low (the step's
// CycleLow: its pump_to, or just above the base pressure; a tube already
// lower stays where it is) and backfills to P_high with the feed o2, fuel.
// Of the gas before a cycle, P_low/P_high is left, so n cycles leave
//
//	C_n / C_0 = (P_low / P_high)^n
//
// of what the tube held when the step began (Crowl & Louvar, Chemical
// Process Safety, vacuum purging). The record keeps the starting content
// and the factor per cycle apart.
func (a *analysis) cyclePurge(t *tube, sp *recipe.StepPlan, o2, fuel float64) {
	s := sp.Step
	high, low := s.Backfill.SI, sp.CycleLow
	pg := Purge{Step: sp.Index + 1, Label: sp.Label, Cycles: s.Cycles, LowPa: low, HighPa: high,
		StartPa: t.P, OxygenBefore: t.O2, FuelBefore: t.Fuel, PerCycle: low / high, CycleSeconds: sp.CycleTime}
	for c := 0; c < s.Cycles; c++ {
		t.P = math.Min(t.P, low)
		t.fill(high, o2, fuel)
	}
	pg.Factor = CycleFraction(low, high, s.Cycles)
	pg.OxygenAfter, pg.FuelAfter = t.O2, t.Fuel
	a.r.Purges = append(a.r.Purges, pg)
}

// flowThrough fills the tube to the step's pressure P with its feed (o2,
// fuel fractions) and sweeps it with the rest of the step's gas,
//
//	N = max(0, ṅ·t − n_fill) / n_tube   volume changes, n = P·V/(R·T_room)
//
// (none for a vent); a purge step is recorded.
func (a *analysis) flowThrough(t *tube, sp *recipe.StepPlan, P, o2, fuel float64) {
	s, V := sp.Step, a.p.Furnace.TubeVolume()
	P0 := t.P
	t.fill(P, o2, fuel)
	nTube := P * V / (gas.R * recipe.RoomTemperature)
	nFill := math.Max(0, P-P0) * V / (gas.R * recipe.RoomTemperature)
	N := 0.0
	if s.Kind != recipe.KindVent && nTube > 0 {
		N = math.Max(0, sp.TotalFlow*sp.Duration-nFill) / nTube
	}
	t.sweep(N, o2, fuel)
	if s.Kind == recipe.KindPurge {
		a.r.Purges = append(a.r.Purges, Purge{Step: sp.Index + 1, Label: sp.Label, Exchanges: N,
			Factor: SweepFraction(N), OxygenAfter: t.O2, FuelAfter: t.Fuel})
	}
}

// sequenceEnd judges the end of the run (no vent after fuel) and
// estimates the O2 a leak at the leak check's pass figure would bring into
// the smallest fuel flow, and into the first fuel step's flow ṅ once it
// has swept the tube:
//
//	ṅ_leak = (dP/dt)·V/(R·T_room) of air,  y_O2 = 0.2095·ṅ_leak/(ṅ + ṅ_leak)
func (a *analysis) sequenceEnd(st *sequenceState) {
	p := a.p
	if st.fuelSeen && a.r.VentStep == 0 {
		last := &p.Steps[len(p.Steps)-1]
		a.add(Warning, last, "sequence.no-vent", "end with an inert purge and a vent step so the tube is opened without fuel in it",
			"the recipe has no vent step; at its end the tube holds %s fuel", pct(st.t.Fuel))
	}
	if st.fuelSeen && a.r.LeakCheckStep > 0 && !math.IsInf(st.minFuelFlow, 1) {
		s := p.Steps[a.r.LeakCheckStep-1].Step
		leakIn := s.MaxRise.SI * p.Furnace.TubeVolume() / (gas.R * recipe.RoomTemperature) // mol/s of air at the pass figure
		a.r.LeakOxygenPPM = leakIn * airOxygen / st.minFuelFlow * 1e6
		if a.r.LeakCheckStep < a.r.FirstFuelStep {
			flow := p.Steps[a.r.FirstFuelStep-1].TotalFlow
			a.r.LeakOxygenAtFuel = leakIn * airOxygen / (flow + leakIn)
		}
	}
}

// firstFuel judges the state of the tube when the first flammable gas
// arrives.
func (a *analysis) firstFuel(sp *recipe.StepPlan, sev Severity, leak, purged bool, o2 float64) {
	if !leak {
		a.add(sev, sp, "sequence.leak-check", "add a leak-check step (valves closed, pressure rise below its pass figure) before any flammable gas, and do not go on if it fails",
			"flammable gas enters before any leak check")
	}
	if !purged {
		purged = a.evacuationPurge(sp)
	}
	if !purged {
		a.add(sev, sp, "sequence.inert-purge", fmt.Sprintf("add an inert purge (flow-through of at least %.2f tube volumes, or pump-and-backfill cycles) before any flammable gas", SweepExchanges(airOxygen, a.o.PurgeTarget)),
			"flammable gas enters before any inert purge").num("O2 in tube", o2*100, "%")
		return
	}
	if o2 > a.o.PurgeTarget {
		got, target := pctApart(o2, a.o.PurgeTarget)
		a.add(sev, sp, "sequence.purge-oxygen", "purge longer or add pump-and-backfill cycles before the first flammable gas",
			"the tube still holds %s O2 when flammable gas enters, above the %s target", got, target).
			num("O2 in tube", o2*100, "%").num("target", a.o.PurgeTarget*100, "%")
	}
}

// evacuationPurge reports whether the site counts the pump-downs before
// the first flammable step sp as its purge (Site.PurgeByEvacuation), and
// when it does records them as a purge with their dilution factor
// p_low/p_high and notes it.
func (a *analysis) evacuationPurge(sp *recipe.StepPlan) bool {
	ev := a.p.EvacuationsBefore(sp.Index)
	ok, need := a.s.EvacuationPurges(ev)
	if !ok || ev.Last < 0 {
		return false
	}
	last := &a.p.Steps[ev.Last]
	a.r.Purges = append(a.r.Purges, Purge{Step: last.Index + 1, Label: last.Label, Evacuations: ev.Cycles, LowPa: ev.Low,
		Factor: ev.Factor, OxygenAfter: a.r.OxygenAtFuel})
	a.add(Note, sp, "sequence.evacuation-purge", "no action; the site's gas-safety rules decide whether evacuation is enough",
		"the site counts evacuation as the purge (purge_by_evacuation, at least %d): %d evacuation%s to %s leave p_low/p_high = %.2g of the air",
		need, ev.Cycles, plural(ev.Cycles), pressureText(ev.Low), ev.Factor).num("dilution factor", ev.Factor, "")
	return true
}

// vent judges the tube when it is opened.
func (a *analysis) vent(sp *recipe.StepPlan, t tube, purged, fuelSeen bool) {
	a.r.VentStep, a.r.VentTempC = sp.Index+1, recipe.Celsius(sp.T0)
	if sp.T0 > recipe.HotTemperature {
		a.add(Stop, sp, "sequence.vent-hot", fmt.Sprintf("cool below %.0f °C under inert gas before venting and opening", recipe.Celsius(recipe.VentTemperature)),
			"the tube is vented and opened at %.0f °C: air meets hot copper and any fuel left in the tube", recipe.Celsius(sp.T0)).
			num("temperature", recipe.Celsius(sp.T0), "°C")
	} else if sp.T0 > recipe.VentTemperature {
		a.add(Warning, sp, "sequence.vent-warm", fmt.Sprintf("cool below %.0f °C before opening", recipe.Celsius(recipe.VentTemperature)),
			"the tube is vented at %.0f °C", recipe.Celsius(sp.T0)).num("temperature", recipe.Celsius(sp.T0), "°C")
	}
	if !fuelSeen {
		return
	}
	share := 0.0
	if t.LFL > 0 {
		share = t.Fuel / t.LFL
	}
	a.r.FuelAtOpen = share
	if share > a.o.VentTarget {
		got, limit := pctApart(share, a.o.VentTarget)
		a.add(Stop, sp, "sequence.purge-before-vent", fmt.Sprintf("purge with inert gas until the tube holds below %.0f %% of LFL (at least %.2f tube volumes from the last fuel step) before venting", a.o.VentTarget*100, SweepExchanges(t.Fuel, a.o.VentTarget*t.LFL)),
			"the tube holds %s fuel when opened, %s of its LFL %s (limit %s)", pct(t.Fuel), got, pct(t.LFL), limit).
			num("fuel in tube", t.Fuel*100, "%").num("share of LFL", share*100, "%")
	} else if !purged {
		a.add(Warning, sp, "sequence.purge-before-vent", "add an inert purge after the last flammable gas; do not rely on the vent's backfill alone",
			"no inert purge after the last flammable gas: only the vent's backfill dilutes it, to %s (%.2g %% of LFL)", pct(t.Fuel), share*100).
			num("share of LFL", share*100, "%")
	}
}
