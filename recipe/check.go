package recipe

import (
	"cmp"
	"fmt"
	"math"
	"slices"
	"strings"

	"github.com/foilrun/foilrun/recipe/gas"
)

// Check thresholds that are choices, not physics. Each is common practice
// in CVD labs unless it says otherwise.
const (
	// HotTemperature: above this a carbon source or an opened tube is
	// treated as "hot" (the tube glows and copper oxidises fast in air).
	HotTemperature = 473.15 // K (200 °C)
	// VentTemperature: venting above this is a warning.
	VentTemperature = 373.15 // K (100 °C)
	// CarbonMinTemperature: a carbon source below this is a warning (no
	// graphitic growth on copper is expected, only amorphous deposits).
	CarbonMinTemperature = 973.15 // K (700 °C)
	// CopperLossWarn and CopperLossError: vacuum evaporation upper bound per
	// face as a share of the foil thickness.
	CopperLossWarn  = 0.10
	CopperLossError = 0.50
	// VacuumBoundPressure: below this the Hertz–Knudsen vacuum bound is
	// close to the real copper loss (the mean free path is millimetres);
	// above it the bound is only reported.
	VacuumBoundPressure = 1.0 // Pa
	// HoldMismatch: a hold step whose temperature differs from where the
	// furnace is by more than this has a missing ramp.
	HoldMismatch = 5.0 // K
	// CopperWarnMargins: a set temperature closer to copper's melting
	// point than this many thermocouple margins is a warning. One margin
	// covers the thermocouple reading off the foil; the other two the
	// controller's overshoot and the spread of temperature along the
	// heated zone, which together are often as large (common practice).
	CopperWarnMargins = 3
)

type checker struct {
	p    *Plan
	f    *Furnace
	fs   []Finding
	melt [2][]*StepPlan // steps too near copper's melting point: [0] warning, [1] error
	// errorsOnly keeps only the errors (Prefix.NewErrorDeriver).
	errorsOnly bool
}

func (c *checker) add(sev Severity, sp *StepPlan, rule string, pos Pos, hint, format string, args ...any) {
	if !c.keeps(sev) {
		return
	}
	fd := Finding{Severity: sev, Rule: rule, Message: fmt.Sprintf(format, args...), Hint: hint, Pos: pos, Line: pos.Line}
	if sp != nil {
		fd.Step, fd.StepName = sp.Index+1, sp.Label
		if pos.Line == 0 {
			fd.Pos, fd.Line = sp.Step.Pos, sp.Step.Pos.Line
		}
	}
	c.fs = append(c.fs, fd)
}

// keeps reports whether the checker keeps findings of severity sev: a
// check whose message costs something to write asks first.
func (c *checker) keeps(sev Severity) bool { return !c.errorsOnly || sev == Error }

// Check runs every limit and sequence check of a plan against its furnace
// and returns the findings, most serious first, then by step.
func Check(p *Plan) []Finding {
	c := &checker{p: p, f: p.Furnace}
	c.steps(0, len(p.Steps))
	return c.finish()
}

// CheckErrors returns the errors among the findings Check(p) returns, in
// the same order, without writing out the notes and warnings: what
// decides whether a plan is feasible.
func CheckErrors(p *Plan) []Finding {
	c := &checker{p: p, f: p.Furnace, errorsOnly: true}
	c.steps(0, len(p.Steps))
	return c.finish()
}

// steps runs the checks of one step on steps from … to−1 of the plan. Those
// of step i read only the plans of steps up to i (see Prefix).
func (c *checker) steps(from, to int) {
	for i := from; i < to; i++ {
		sp := &c.p.Steps[i]
		c.temperature(sp)
		c.flows(sp)
		c.pressure(sp)
		c.copper(sp)
		c.growth(sp)
	}
}

// finish runs the checks that read the whole plan and sorts the findings,
// most serious first, then by step.
func (c *checker) finish() []Finding {
	c.copperMelting()
	c.sequence()
	slices.SortStableFunc(c.fs, func(a, b Finding) int {
		if a.Severity != b.Severity {
			return cmp.Compare(b.Severity, a.Severity)
		}
		return cmp.Compare(a.Step, b.Step)
	})
	return c.fs
}

func c2(k float64) string { return fmt.Sprintf("%.1f °C", Celsius(k)) }

func (c *checker) temperature(sp *StepPlan) {
	h, tube := c.f.Heater, c.f.Tube
	margin := h.ThermocoupleMargin.SI
	Tmax := sp.MaxTemperature()
	pos := sp.Step.Temperature.Pos
	if pos.Line == 0 {
		pos = sp.Step.To.Pos
	}
	melt := gas.CopperMeltingPoint
	heatsItself := sp.T1 >= sp.T0 || sp.Index == 0 // a later cool or ramp down only keeps the heat the step before reported
	switch {
	case !heatsItself:
	case Tmax+margin >= melt:
		c.melt[1] = append(c.melt[1], sp)
	case Tmax+CopperWarnMargins*margin >= melt:
		c.melt[0] = append(c.melt[0], sp)
	}
	if Tmax > h.MaxTemperature.SI {
		c.add(Error, sp, "temperature.heater-max", pos, "lower the temperature or use a furnace rated for it",
			"set temperature %s is above the heater's maximum %s", c2(Tmax), c2(h.MaxTemperature.SI))
	}
	if Tmax > tube.ServiceLimit.SI {
		c.add(Error, sp, "temperature.tube-limit", pos, "lower the temperature or use a tube rated for it",
			"set temperature %s is above the %s tube's continuous-service limit %s", c2(Tmax), tube.Material, c2(tube.ServiceLimit.SI))
	}
	if sp.Step.Kind == KindRamp || sp.Step.Kind == KindCool {
		rate := sp.Step.Rate.SI
		up := sp.T1 > sp.T0
		if up && rate > h.MaxRampUp.SI {
			c.add(Error, sp, "ramp.heater-max", sp.Step.Rate.Pos, fmt.Sprintf("use at most %.1f C/min", h.MaxRampUp.SI*60),
				"ramp rate %.1f C/min is above the heater's maximum ramp-up %.1f C/min", rate*60, h.MaxRampUp.SI*60)
		}
		if !up && rate > h.MaxRampDown.SI {
			c.add(Error, sp, "ramp.heater-max-down", sp.Step.Rate.Pos, fmt.Sprintf("use at most %.1f C/min, or let it cool naturally", h.MaxRampDown.SI*60),
				"cooling rate %.1f C/min is above the furnace's maximum ramp-down %.1f C/min", rate*60, h.MaxRampDown.SI*60)
		}
		if !up {
			c.naturalCooling(sp)
		}
		if sp.Step.Kind == KindRamp && !up && sp.T1 != sp.T0 {
			c.add(Note, sp, "ramp.direction", sp.Step.To.Pos, "use a cool step for cooling, so the log reads clearly", "ramp step goes down from %s to %s", c2(sp.T0), c2(sp.T1))
		}
		if sp.Step.Kind == KindCool && up {
			c.add(Warning, sp, "ramp.direction", sp.Step.To.Pos, "use a ramp step to heat", "cool step goes up from %s to %s", c2(sp.T0), c2(sp.T1))
		}
	}
	if (sp.Step.Kind == KindAnneal || sp.Step.Kind == KindGrow) && sp.Index > 0 && c.keeps(Warning) {
		prev := c.p.Steps[sp.Index-1].T1
		if math.Abs(prev-sp.T0) > HoldMismatch {
			c.add(Warning, sp, "sequence.missing-ramp", sp.Step.Temperature.Pos, "add a ramp step to the hold temperature",
				"hold at %s but the furnace is at %s after the step before", c2(sp.T0), c2(prev))
		}
	}
}

// naturalCooling warns when a step's programmed cooling rate is beyond
// what the furnace does by itself over part of the step; the plan has
// already followed the slower of the two (Furnace.CoolTime, CoolReach).
func (c *checker) naturalCooling(sp *StepPlan) {
	s, f := sp.Step, c.f
	target := s.To.SI
	Tc := f.NaturalBelow(s.Rate.SI)
	if f.Cooling == nil || target >= Tc {
		return
	}
	how := fmt.Sprintf("natural time constant %s, ambient %s", f.Cooling.TimeConstant.String(), c2(f.Cooling.ambient()))
	if f.Cooling.TimeConstant.IsZero() {
		how = "the furnace's table of natural cooling rates"
	}
	var then string
	switch {
	case !s.Duration.IsZero() && sp.T1 > target+0.05:
		then = fmt.Sprintf("in the step's %s it reaches only %s, not %s", s.Duration.String(), c2(sp.T1), c2(target))
	case sp.T1 > target:
		then = fmt.Sprintf("it never reaches %s; the plan ends the step at %s after %.1f min", c2(target), c2(sp.T1), sp.Duration/60)
	default:
		then = fmt.Sprintf("the step takes %.1f min, not the %.1f min the programmed rate gives", sp.Duration/60, sp.ProgrammedDuration/60)
	}
	c.add(Warning, sp, "ramp.natural-cooling", s.Rate.Pos, "program a rate the furnace can follow, or allow the longer time (and check the temperature before venting)",
		"programmed %.1f C/min is faster than the furnace cools by itself below %s (%s): the plan follows natural cooling there and %s",
		s.Rate.SI*60, c2(math.Min(Tc, sp.T0)), how, then)
}

// copperMelting reports the steps too near copper's melting point as one
// finding per severity, at the first such step, listing them all.
func (c *checker) copperMelting() {
	margin, melt := c.f.Heater.ThermocoupleMargin.SI, gas.CopperMeltingPoint
	for sev, sps := range c.melt {
		if len(sps) == 0 || sev == 0 && !c.keeps(Warning) {
			continue
		}
		hottest, labels := sps[0], make([]string, len(sps))
		for i, sp := range sps {
			labels[i] = sp.Label
			if sp.MaxTemperature() > hottest.MaxTemperature() {
				hottest = sp
			}
		}
		first, Tmax := sps[0], hottest.MaxTemperature()
		pos := first.Step.Temperature.Pos
		if pos.Line == 0 {
			pos = first.Step.To.Pos
		}
		steps := fmt.Sprintf("step%s %s", plural(len(sps)), strings.Join(labels, ", "))
		if sev == 1 {
			c.add(Error, first, "temperature.copper-melting", pos, "stay well below copper's melting point; most recipes grow at 1000–1060 °C",
				"set temperature %s (%s) plus the thermocouple margin %.0f K reaches copper's melting point %s (ITS-90 freezing point of copper)", c2(Tmax), steps, margin, c2(melt))
			continue
		}
		c.add(Warning, first, "temperature.copper-melting", pos, "check the thermocouple's offset against a reference, or grow lower; foil near its melting point sags, roughens and evaporates",
			"set temperature %s (%s) is within %.1f K of copper's melting point %s, closer than %d × the %.0f K thermocouple margin = %.0f K: one margin for the thermocouple reading off the foil, two for the controller's overshoot and the temperature spread along the zone, so part of the foil can come near its melting point",
			c2(Tmax), steps, melt-Tmax, c2(melt), CopperWarnMargins, margin, CopperWarnMargins*margin)
	}
}

// LineFor returns the furnace's gas line for a gas symbol, or nil.
func (f *Furnace) LineFor(symbol string) *GasLine {
	for i := range f.Lines {
		if f.Lines[i].Gas == symbol {
			return &f.Lines[i]
		}
	}
	return nil
}

// Correction returns the factor that turns the MFC's reading into the flow
// of the line's gas: the gas's tabulated factor divided by that of the gas
// the MFC is calibrated for (1 when they are the same), or the line's own
// correction_factor when the file gives one.
func (l *GasLine) Correction() float64 {
	if !l.CorrectionFactor.IsZero() {
		return l.CorrectionFactor.SI
	}
	if l.CalibratedFor == "" || l.CalibratedFor == l.Gas {
		return 1
	}
	g, err1 := gas.Lookup(l.Gas)
	cal, err2 := gas.Lookup(l.CalibratedFor)
	if err1 != nil || err2 != nil || cal.MFCFactor.V == 0 {
		return 1
	}
	return g.MFCFactor.V / cal.MFCFactor.V
}

// FullScaleOfGas returns the line's full scale in mol/s of its own gas.
func (l *GasLine) FullScaleOfGas() float64 { return l.FullScale.SI * l.Correction() }

func (c *checker) flows(sp *StepPlan) {
	for j, fl := range sp.Step.Flows {
		if fl.Flow.SI == 0 {
			continue
		}
		line := c.f.LineFor(fl.Gas)
		if line == nil {
			c.add(Error, sp, "flow.no-line", fl.Pos, "add a gas line for it to the furnace file, or use a gas the furnace has",
				"no gas line for %s on furnace %q", fl.Gas, c.f.Name)
			continue
		}
		cf := line.Correction()
		fs := line.FullScale.SI * cf // FullScaleOfGas
		share := fl.Flow.SI / fs
		sccm := sp.Flows[j].SCCM
		if share > 1 {
			c.add(Error, sp, "flow.full-scale", fl.Flow.Pos, "lower the flow or fit a larger MFC",
				"%s flow %.4g sccm is above the line's full scale %.4g sccm of %s%s", fl.Gas, sccm, fs/molPerSCCMSecond, fl.Gas, calibration(line, cf, share))
			continue
		}
		if c.errorsOnly {
			continue // what follows are warnings and notes
		}
		calib := calibration(line, cf, share)
		low := line.LowEnd.SI
		if share < low {
			c.add(Warning, sp, "flow.low-end", fl.Flow.Pos, "use a smaller MFC, or a diluted source gas",
				"%s flow %.4g sccm is %.2f %% of full scale, below the %.0f %% where a thermal MFC is accurate%s", fl.Gas, sccm, share*100, low*100, calib)
			continue
		}
		if cf != 1 {
			c.add(Note, sp, "flow.correction", fl.Flow.Pos, fmt.Sprintf("set the controller to %.4g sccm (%s-equivalent)", sccm/cf, line.CalibratedFor),
				"%s flow %.4g sccm%s", fl.Gas, sccm, calib)
		}
	}
}

// calibration is what a flow finding adds about the line's correction
// factor cf at a set-point share of full scale; "" when cf is 1.
func calibration(line *GasLine, cf, share float64) string {
	switch {
	case cf == 1:
		return ""
	case line.CalibratedFor == "":
		return fmt.Sprintf(" (correction factor %.3f; set-point %.1f %% of full scale)", cf, share*100)
	}
	return fmt.Sprintf(" (MFC calibrated for %s, correction factor %.3f; set-point %.1f %% of full scale)", line.CalibratedFor, cf, share*100)
}

func torrOf(pa float64) string {
	switch {
	case pa >= 0.5*atmosphere:
		return fmt.Sprintf("%.1f kPa", pa/1000)
	case pa >= torr:
		return fmt.Sprintf("%.3g Torr", pa/torr)
	default:
		return fmt.Sprintf("%.3g mTorr", pa/torr*1000)
	}
}

func (c *checker) pressure(sp *StepPlan) {
	v := c.f.Vacuum
	s := sp.Step
	if !sp.OpenToPump && s.Kind != KindLeakCheck && sp.TotalFlow > 0 && sp.Setpoint < sp.PumpLimit*0.999 {
		from, hint := "", "lower the total flow, raise the set-point, or use a larger pump"
		if !s.Pressure.IsSet() {
			from = " (the atmosphere the tube starts at)"
			if sp.SetpointStep >= 0 {
				from = fmt.Sprintf(" (carried over from step %s)", c.p.Steps[sp.SetpointStep].Label)
			}
			hint = "give the step a pressure of its own the pump can hold, lower the total flow, or use a larger pump"
		}
		c.add(Error, sp, "pressure.pump-limit", s.Pressure.Pos, hint,
			"set-point %s%s is below %s, the lowest pressure the pump (%.3g m3/h) can hold with %.4g sccm total throughput; the plan uses %s",
			torrOf(sp.Setpoint), from, torrOf(sp.PumpLimit), v.PumpSpeed.SI*3600, sp.TotalFlow/molPerSCCMSecond, torrOf(sp.Pressure))
	}
	if s.Kind == KindVent || s.Kind == KindLeakCheck {
		return
	}
	if sp.Pressure < v.GaugeMin.SI || sp.Pressure > v.GaugeMax.SI {
		if sp.Pressure >= 0.5*atmosphere && s.Kind != KindGrow && s.Kind != KindAnneal {
			return // near atmosphere during handling steps: the gauge is simply over range
		}
		c.add(Warning, sp, "pressure.gauge-range", s.Pressure.Pos, "use a gauge whose range covers the process pressure, or the reading cannot be trusted",
			"process pressure %s is outside the %s's range %s to %s", torrOf(sp.Pressure), v.Gauge, torrOf(v.GaugeMin.SI), torrOf(v.GaugeMax.SI))
	}
	if s.Kind == KindPurge && s.Cycles > 0 && !s.PumpTo.IsZero() && s.PumpTo.SI < v.BasePressure.SI {
		c.add(Error, sp, "pressure.unreachable", s.PumpTo.Pos, "raise pump_to above the base pressure, or leave it out to pump each cycle to just above the base pressure",
			"cycle pump-down target %s is below the pump's base pressure %s", torrOf(s.PumpTo.SI), torrOf(v.BasePressure.SI))
	}
	if s.Kind == KindPump && !s.Until.IsZero() && s.Until.SI < sp.PumpLimit {
		c.add(Error, sp, "pressure.unreachable", s.Until.Pos, "raise the end pressure or check the pump and base pressure",
			"pump-down target %s is below the lowest pressure the pump reaches, %s", torrOf(s.Until.SI), torrOf(sp.PumpLimit))
	}
}

// copper judges the copper lost by evaporation by the model that applies
// (StepPlan.CopperModel): below VacuumBoundPressure the vacuum bound, above
// CopperDiffusionPressure the diffusion-limited estimate; in between the
// bound is only reported. A vacuum bound that does not apply but would
// have been judged is shown beside the estimate as a note.
func (c *checker) copper(sp *StepPlan) {
	th := c.p.Recipe.Substrate.Thickness.SI
	if th <= 0 || sp.CopperLossVacuum < CopperLossWarn*th*0.1 {
		return
	}
	share, vshare := sp.CopperLoss/th, sp.CopperLossVacuum/th
	if !c.keeps(Warning) && !(share >= CopperLossError && (sp.CopperModel != CopperVacuumBound || sp.Pressure <= VacuumBoundPressure)) {
		return // only an error is kept, and this is none (see the switch below)
	}
	msg := fmt.Sprintf("copper can evaporate up to %.2f um per face (Hertz–Knudsen vacuum bound), %.0f %% of the %.0f um foil", sp.CopperLossVacuum*1e6, vshare*100, th*1e6)
	if sp.CopperModel == CopperDiffusion {
		msg = fmt.Sprintf("copper loss about %.2g um per face at %s (%.2g %% of the %.0f um foil) by the %s, which applies above %s (vapour diffusing through a gas film %.0f mm thick); the vacuum bound %.2f um (%.0f %%) does not apply",
			sp.CopperLoss*1e6, torrOf(sp.Pressure), share*100, th*1e6, CopperDiffusion, torrOf(CopperDiffusionPressure), c.f.CopperBoundaryLayer()*1e3, sp.CopperLossVacuum*1e6, vshare*100)
	}
	switch {
	case sp.CopperModel == CopperVacuumBound && sp.Pressure > VacuumBoundPressure:
		// Between the two regimes vapour already diffuses through some gas
		// and the real loss is below the bound: report it, do not judge it.
		if share >= CopperLossWarn {
			c.add(Note, sp, "copper.evaporation", sp.Step.Duration.Pos, "the gas above the foil slows evaporation below this bound; weigh the foil before and after if it matters",
				"%s at %s (between %s and %s neither model holds well)", msg, torrOf(sp.Pressure), torrOf(VacuumBoundPressure), torrOf(CopperDiffusionPressure))
		}
	case share < CopperLossWarn && vshare >= CopperLossWarn:
		c.add(Note, sp, "copper.evaporation", sp.Step.Duration.Pos, "no action; weigh the foil before and after to check the estimate", "%s", msg)
	case share >= CopperLossError:
		c.add(Error, sp, "copper.evaporation", sp.Step.Duration.Pos, "shorten the step, lower the temperature, or raise the pressure with an inert gas", "%s", msg)
	case share >= CopperLossWarn:
		c.add(Warning, sp, "copper.evaporation", sp.Step.Duration.Pos, "expect a thinner, rougher foil; an inert background gas slows the loss", "%s", msg)
	}
}

func (c *checker) growth(sp *StepPlan) {
	s := sp.Step
	if s.Kind == KindGrow && !sp.CarbonSource {
		c.add(Warning, sp, "growth.no-carbon", s.Pos, "add a carbon source such as \"CH4: 5 sccm\" to the step's flows", "grow step has no carbon source")
	}
	if sp.CarbonSource && sp.MaxTemperature() < CarbonMinTemperature {
		c.add(Warning, sp, "growth.carbon-cold", s.Pos, "admit the carbon source only at growth temperature",
			"carbon source flows at %s, below %s where graphene grows on copper", c2(sp.MaxTemperature()), c2(CarbonMinTemperature))
	}
	if sp.PCH4 > 0 && sp.Supersaturation < 1 && s.Kind == KindGrow {
		c.add(Warning, sp, "growth.etching", s.Pos, "raise the CH4:H2 ratio or lower the temperature; below equilibrium hydrogen etches graphite",
			"CH4 partial pressure %.3g Pa is below the %.3g Pa in equilibrium with graphite (supersaturation %.2f): no growth, the step etches",
			sp.PCH4, sp.PCH4/sp.Supersaturation, sp.Supersaturation)
	}
}

// evacuationPurge judges the first flammable step sp of a recipe with no
// inert purge before it: the site may count the pump-downs before it as
// the purge (Site.PurgeByEvacuation); else it is an error.
func (c *checker) evacuationPurge(sp *StepPlan) {
	ev := c.p.EvacuationsBefore(sp.Index)
	ok, need := c.p.Site.EvacuationPurges(ev)
	if ok {
		c.add(Note, sp, "sequence.evacuation-purge", sp.Step.Pos, "no action; the site's gas-safety rules decide whether evacuation is enough",
			"the site counts evacuation as the purge: %d evacuation%s to %s leave p_low/p_high = %.2g of the air (the site asks for %d)",
			ev.Cycles, plural(ev.Cycles), torrOf(ev.Low), ev.Factor, need)
		return
	}
	msg := "flammable gas flows before the tube was purged with inert gas"
	if need > 0 {
		msg += fmt.Sprintf(" (the site counts evacuation as a purge after %d evacuations; the recipe has %d, leaving %.2g of the air)", need, ev.Cycles, ev.Factor)
	}
	c.add(Error, sp, "sequence.inert-purge", sp.Step.Pos, "add an inert purge (or pump-and-backfill cycles) after the leak check and before any flammable gas", "%s", msg)
}

func plural(n int) string {
	if n == 1 {
		return ""
	}
	return "s"
}

func (c *checker) sequence() {
	leak, purged := false, false
	flammableInTube := false // flammable gas admitted and not yet purged out
	for i := range c.p.Steps {
		sp := &c.p.Steps[i]
		s := sp.Step
		switch s.Kind {
		case KindLeakCheck:
			leak = true
		case KindPurge:
			inertOnly := true
			for _, fl := range sp.Flows {
				if fl.Gas.Flammable && fl.Molar > 0 {
					inertOnly = false
				}
			}
			if !inertOnly {
				c.add(Error, sp, "sequence.purge-gas", s.Pos, "purge with argon or nitrogen only", "purge step flows a flammable gas")
			} else {
				purged = true
				flammableInTube = false
			}
		}
		if sp.Flammable {
			if !leak {
				c.add(Error, sp, "sequence.leak-check", s.Pos, "add a leak-check step (valves closed, pressure rise below the pass figure) before any flammable gas",
					"flammable gas flows before any leak check")
				leak = true // report once
			}
			if !purged {
				c.evacuationPurge(sp)
				purged = true
			}
			flammableInTube = true
		}
		if s.Kind == KindVent {
			if sp.T0 > HotTemperature {
				c.add(Error, sp, "sequence.vent-hot", s.Pos, fmt.Sprintf("cool below %s before venting", c2(VentTemperature)),
					"vent at %s: air meets hot copper and any remaining hydrogen", c2(sp.T0))
			} else if sp.T0 > VentTemperature {
				c.add(Warning, sp, "sequence.vent-warm", s.Pos, fmt.Sprintf("cool below %s before venting to keep the copper from oxidising", c2(VentTemperature)),
					"vent at %s", c2(sp.T0))
			}
			if flammableInTube {
				c.add(Error, sp, "sequence.purge-before-vent", s.Pos, "add an inert purge after the last flammable gas and before the vent",
					"vent while flammable gas from earlier steps is still in the tube")
			}
			if sp.Flammable {
				c.add(Error, sp, "sequence.vent-gas", s.Pos, "vent with an inert gas", "vent step flows a flammable gas")
			}
		}
	}
	last := c.p.Steps[len(c.p.Steps)-1]
	if last.T1 > HotTemperature {
		c.add(Warning, &c.p.Steps[len(c.p.Steps)-1], "sequence.ends-hot", Pos{}, "end with a cool step", "recipe ends at %s", c2(last.T1))
	}
}
