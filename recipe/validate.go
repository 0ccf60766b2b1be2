package recipe

import (
	"fmt"
	"sort"

	"github.com/foilrun/foilrun/recipe/gas"
)

// Validation at load time: values that cannot be right whatever the
// furnace (negative flows, unknown gases, a ramp without a rate). Limits
// that depend on the furnace are checks (see Check), not load errors.

type problems []Problem

func (ps *problems) at(p Pos, field, msg, hint string) {
	*ps = append(*ps, Problem{Pos: p, Field: field, Msg: msg, Hint: hint})
}

// positive requires q > 0 when set.
func (ps *problems) positive(q Quantity, field string) {
	if !q.IsZero() && !(q.SI > 0) {
		ps.at(q.Pos, field, fmt.Sprintf("%s %q must be greater than zero", field, q.Text), "")
	}
}

// maxStepDuration is the longest duration a step may have: 7 days, far
// beyond any CVD step (hours at most), yet well inside what the model
// integrates without overflow.
const maxStepDuration = 7 * 24 * 3600 // s

// stepDuration refuses a step duration over maxStepDuration.
func (ps *problems) stepDuration(q Quantity, label string) {
	if q.SI > maxStepDuration {
		ps.at(q.Pos, "duration", fmt.Sprintf("step %s: duration %q is longer than 7 days", label, q.Text), "write the step's real length, such as \"30 min\"")
	}
}

// nonNegative requires q ≥ 0 when set.
func (ps *problems) nonNegative(q Quantity, field string) {
	if !q.IsZero() && q.SI < 0 {
		ps.at(q.Pos, field, fmt.Sprintf("%s %q must not be negative", field, q.Text), "")
	}
}

// absolute requires a temperature above absolute zero.
func (ps *problems) absolute(q Quantity, field string) {
	if !q.IsZero() && q.SI <= 0 {
		ps.at(q.Pos, field, fmt.Sprintf("%s %q is at or below absolute zero", field, q.Text), "")
	}
}

// fraction requires 0 ≤ q ≤ 1 when set.
func (ps *problems) fraction(q Quantity, field string) {
	if !q.IsZero() && (q.SI < 0 || q.SI > 1) {
		ps.at(q.Pos, field, fmt.Sprintf("%s %q must be between 0 %% and 100 %%", field, q.Text), "")
	}
}

// gasName resolves a gas name to its canonical symbol.
func (ps *problems) gasName(name string, p Pos, field string) string {
	g, err := gas.Lookup(name)
	if err != nil {
		ps.at(p, field, err.Error(), "")
		return name
	}
	return g.Symbol
}

// validateRecipe checks a decoded recipe: the substrate and start
// temperature, then every step (step).
func validateRecipe(r *Recipe) []Problem {
	var ps problems
	ps.positive(r.Substrate.Thickness, "thickness")
	ps.fraction(r.Substrate.Purity, "purity")
	ps.absolute(r.StartTemperature, "start_temperature")
	if len(r.Steps) == 0 {
		ps.at(r.Pos, "steps", "the recipe has no steps", "add at least a ramp, a grow and a cool step")
	}
	for i := range r.Steps {
		ps.step(&r.Steps[i], r.Steps[i].Label(i))
	}
	return ps
}

// step checks one step: the ranges of its quantities, its gases (resolved
// to their canonical symbols in place) and flows, and the fields its kind
// needs and refuses (stepKind). label names the step in messages.
func (ps *problems) step(s *Step, label string) {
	ps.positive(s.Duration, "duration")
	ps.stepDuration(s.Duration, label)
	ps.positive(s.Until, "until")
	ps.absolute(s.Temperature, "temperature")
	ps.absolute(s.To, "to")
	ps.positive(s.Rate, "rate")
	ps.positive(s.Pressure.Setpoint, "pressure")
	ps.positive(s.Backfill, "backfill")
	ps.positive(s.PumpTo, "pump_to")
	ps.nonNegative(s.MaxRise, "max_rise")
	if s.Cycles < 0 {
		ps.at(s.Pos, "cycles", fmt.Sprintf("step %s: cycles %d must not be negative", label, s.Cycles), "")
	}
	for j := range s.Flows {
		f := &s.Flows[j]
		f.Gas = ps.gasName(f.Gas, f.Pos, "flows")
		if f.Flow.SI < 0 {
			ps.at(f.Flow.Pos, "flows", fmt.Sprintf("step %s: flow of %s %q must not be negative", label, f.Gas, f.Flow.Text), "write 0 sccm or leave the gas out")
		}
	}
	ps.stepKind(s, label)
	if s.Kind != KindPurge {
		if s.Cycles != 0 {
			ps.at(s.Pos, "cycles", fmt.Sprintf("step %s: \"cycles\" applies only to a purge step", label), "")
		}
	}
	if s.Cycles == 0 && !s.PumpTo.IsZero() {
		ps.at(s.PumpTo.Pos, "pump_to", fmt.Sprintf("step %s: \"pump_to\" applies only to a purge step with cycles", label), "add \"cycles: 3\" and \"backfill: 1 atm\", or remove pump_to")
	}
	if s.Cycles > 0 && !s.PumpTo.IsZero() && !s.Backfill.IsZero() && s.PumpTo.SI >= s.Backfill.SI {
		ps.at(s.PumpTo.Pos, "pump_to", fmt.Sprintf("step %s: pump_to %q must be below backfill %q, or a cycle dilutes nothing", label, s.PumpTo.Text, s.Backfill.Text), "pump to a pressure well below the backfill, e.g. \"pump_to: 1 Torr\"")
	}
}

// stepKind checks the fields a step's kind needs and those that do not
// apply to it (see the table on Step).
func (ps *problems) stepKind(s *Step, label string) {
	need := func(q Quantity, field, example string) {
		if q.IsZero() {
			ps.at(s.Pos, field, fmt.Sprintf("step %s needs %q", label, field), fmt.Sprintf("add \"%s: %s\"", field, example))
		}
	}
	forbid := func(q Quantity, field string) {
		if !q.IsZero() {
			ps.at(q.Pos, field, fmt.Sprintf("step %s: %q does not apply to a %s step", label, field, s.Kind), "")
		}
	}
	switch s.Kind {
	case KindPump:
		if s.Duration.IsZero() && s.Until.IsZero() {
			ps.at(s.Pos, "until", fmt.Sprintf("step %s needs \"until\" (a pressure) or \"duration\"", label), "add \"until: 20 mTorr\"")
		}
		forbid(s.To, "to")
		forbid(s.Temperature, "temperature")
	case KindLeakCheck:
		need(s.Duration, "duration", "5 min")
		need(s.MaxRise, "max_rise", "5 mTorr/min")
		if len(s.Flows) > 0 {
			ps.at(s.Flows[0].Pos, "flows", fmt.Sprintf("step %s: a leak check is done with the valves closed and no flow", label), "remove the flows")
		}
	case KindPurge:
		if s.Duration.IsZero() && s.Cycles == 0 {
			ps.at(s.Pos, "duration", fmt.Sprintf("step %s needs \"duration\" (flow-through purge) or \"cycles\" (pump and backfill)", label), "add \"duration: 10 min\"")
		}
		if s.Cycles > 0 && s.Backfill.IsZero() {
			need(s.Backfill, "backfill", "1 atm")
		}
		if len(s.Flows) == 0 {
			ps.at(s.Pos, "flows", fmt.Sprintf("step %s: a purge needs an inert gas flow", label), "add \"flows: {Ar: 500 sccm}\"")
		}
	case KindRamp, KindCool:
		need(s.To, "to", "1000 C")
		need(s.Rate, "rate", "15 C/min")
		forbid(s.Temperature, "temperature")
	case KindAnneal, KindGrow:
		need(s.Temperature, "temperature", "1000 C")
		need(s.Duration, "duration", "30 min")
		forbid(s.To, "to")
	case KindVent:
		forbid(s.Temperature, "temperature")
	}
}

// validateFurnace checks a decoded furnace: tube and heater, gas lines,
// vacuum, exhaust and controller log, resolving gas names to their
// canonical symbols in place.
func validateFurnace(f *Furnace) []Problem {
	var ps problems
	ps.positive(f.Tube.InnerDiameter, "inner_diameter")
	ps.positive(f.Tube.HeatedLength, "heated_length")
	ps.positive(f.Tube.Length, "length")
	ps.absolute(f.Tube.ServiceLimit, "service_limit")
	ps.absolute(f.Heater.MaxTemperature, "max_temperature")
	ps.positive(f.Heater.MaxRampUp, "max_ramp_up")
	ps.positive(f.Heater.MaxRampDown, "max_ramp_down")
	ps.nonNegative(f.Heater.ThermocoupleMargin, "thermocouple_margin")
	if !f.Tube.Length.IsZero() && !f.Tube.HeatedLength.IsZero() && f.Tube.Length.SI < f.Tube.HeatedLength.SI {
		ps.at(f.Tube.Length.Pos, "length", fmt.Sprintf("tube length %q is shorter than its heated length %q", f.Tube.Length.Text, f.Tube.HeatedLength.Text), "")
	}
	if len(f.Lines) == 0 {
		ps.at(f.Pos, "gas_lines", "the furnace has no gas lines", "add one line per gas: \"- {gas: H2, full_scale: 100 sccm}\"")
	}
	ps.gasLines(f.Lines)
	ps.vacuum(f.Vacuum)
	ps.nonNegative(f.Exhaust.DilutionFlow, "dilution_flow")
	if f.Exhaust.DilutionGas != "" {
		f.Exhaust.DilutionGas = ps.gasName(f.Exhaust.DilutionGas, f.Exhaust.Pos, "dilution_gas")
	}
	ps.controllerLog(f)
	ps.cooling(f.Cooling)
	return ps
}

// cooling checks a furnace's natural cooling: a time constant or a table
// of rates (sorted by temperature in place), not both.
func (ps *problems) cooling(c *Cooling) {
	if c == nil {
		return
	}
	ps.positive(c.TimeConstant, "time_constant")
	ps.absolute(c.Ambient, "ambient")
	if c.TimeConstant.IsZero() == (len(c.Rates) == 0) {
		ps.at(c.Pos, "cooling", "cooling needs either \"time_constant\" or a table of \"rates\", not both", "give \"cooling: {time_constant: 40 min, ambient: 25 C}\" or \"rates: [{temperature: 400 C, rate: 3 C/min}, …]\"")
	}
	for _, r := range c.Rates {
		ps.absolute(r.Temperature, "temperature")
		ps.positive(r.Rate, "rate")
	}
	sort.SliceStable(c.Rates, func(i, j int) bool { return c.Rates[i].Temperature.SI < c.Rates[j].Temperature.SI })
	for i := 1; i < len(c.Rates); i++ {
		if c.Rates[i].Temperature.SI == c.Rates[i-1].Temperature.SI {
			ps.at(c.Rates[i].Pos, "rates", fmt.Sprintf("two cooling rates at %q", c.Rates[i].Temperature.Text), "give one rate per temperature")
		}
	}
}

// gasLines checks the furnace's gas lines: one per gas, known gases, and
// the ranges of their figures.
func (ps *problems) gasLines(lines []GasLine) {
	seen := map[string]bool{}
	for i := range lines {
		l := &lines[i]
		l.Gas = ps.gasName(l.Gas, l.Pos, "gas")
		if seen[l.Gas] {
			ps.at(l.Pos, "gas", fmt.Sprintf("two gas lines for %s; foilrun needs one line per gas", l.Gas), "merge them or remove one")
		}
		seen[l.Gas] = true
		if l.CalibratedFor != "" {
			l.CalibratedFor = ps.gasName(l.CalibratedFor, l.Pos, "calibrated_for")
		}
		ps.positive(l.FullScale, "full_scale")
		ps.fraction(l.LowEnd, "low_end")
		ps.positive(l.CorrectionFactor, "correction_factor")
	}
}

// vacuum checks the pump, its line and the gauge range.
func (ps *problems) vacuum(v Vacuum) {
	ps.positive(v.PumpSpeed, "pump_speed")
	ps.positive(v.BasePressure, "base_pressure")
	ps.positive(v.LineDiameter, "line_diameter")
	ps.positive(v.LineLength, "line_length")
	ps.positive(v.GaugeMin, "gauge_min")
	ps.positive(v.GaugeMax, "gauge_max")
	if v.GaugeMin.SI > 0 && v.GaugeMax.SI > 0 && v.GaugeMin.SI >= v.GaugeMax.SI {
		ps.at(v.GaugeMax.Pos, "gauge_max", fmt.Sprintf("gauge_max %q must be above gauge_min %q", v.GaugeMax.Text, v.GaugeMin.Text), "")
	}
}

func validateSite(s *Site) []Problem {
	var ps problems
	if !s.Room.Volume.IsZero() && !(s.Room.Volume.SI > 0) {
		ps.at(s.Room.Volume.Pos, "volume", fmt.Sprintf("room volume %q must be greater than zero", s.Room.Volume.Text), "give the room's free air volume, e.g. \"60 m3\"")
	}
	if !s.Room.AirChanges.IsZero() && !(s.Room.AirChanges.SI > 0) {
		ps.at(s.Room.AirChanges.Pos, "air_changes", fmt.Sprintf("air_changes %q must be greater than zero", s.Room.AirChanges.Text), "give the measured ventilation rate, e.g. \"6 /h\"; a room without ventilation needs a gas-safety review before any flammable gas is used")
	}
	ps.positive(s.Room.MaxRelease, "max_release")
	if e := s.PurgeByEvacuation; e != nil && e.MinCycles < 0 {
		ps.at(e.Pos, "min_cycles", fmt.Sprintf("purge_by_evacuation min_cycles %d must not be negative", e.MinCycles), "give the number of pump-downs your site asks for, e.g. 2")
	}
	if o := s.Oxygen; o != nil && !o.DeficientBelow.IsZero() && (o.DeficientBelow.SI <= 0 || o.DeficientBelow.SI >= gas.OxygenInAir) {
		ps.at(o.DeficientBelow.Pos, "deficient_below", fmt.Sprintf("oxygen deficient_below %q must be above 0 %% and below the 20.95 %% of air", o.DeficientBelow.Text), "give the level your site's rules name, e.g. \"19.5 %\"")
	}
	for i := range s.Detectors {
		d := &s.Detectors[i]
		if d.Gas != "O2" {
			d.Gas = ps.gasName(d.Gas, d.Pos, "gas")
		}
		if len(d.Alarms) == 0 {
			ps.at(d.Pos, "alarms", fmt.Sprintf("detector for %s has no alarm points", d.Gas), "add \"alarms: [10 %, 20 %]\"")
		}
		for _, a := range d.Alarms {
			if a.SI <= 0 || a.SI > 1 {
				ps.at(a.Pos, "alarms", fmt.Sprintf("alarm point %q for %s must be above 0 %% and at most 100 %%", a.Text, d.Gas), "flammable-gas alarms are in % of LFL, e.g. 10 % and 20 %")
			}
		}
	}
	ps.imaging(s.Imaging)
	ps.runCodes(s.RunCodes)
	return ps
}

// imaging checks the site's imaging presets: a unique name, polarity
// darker or brighter, a pixel size above zero, a bare gray level of 0 or
// more.
func (ps *problems) imaging(presets []ImagingPreset) {
	seen := map[string]bool{}
	for _, p := range presets {
		if seen[p.Name] {
			ps.at(p.Pos, "name", fmt.Sprintf("imaging preset %q is named twice", p.Name), "give each instrument its own name")
		}
		seen[p.Name] = true
		if p.Polarity != "darker" && p.Polarity != "brighter" {
			ps.at(p.Pos, "polarity", fmt.Sprintf("imaging preset %q: polarity %q, want darker or brighter", p.Name, p.Polarity), "say how graphene domains look against bare copper on this instrument")
		}
		ps.positive(p.Pixel, "pixel")
		if p.BareGray != nil && !(*p.BareGray >= 0) {
			ps.at(p.Pos, "bare_gray", fmt.Sprintf("imaging preset %q: bare_gray %g, want 0 or more", p.Name, *p.BareGray), "give bare copper's gray level in the image's own units (0–255 for 8-bit images)")
		}
	}
}
