package recipe

import (
	"math"

	"github.com/foilrun/foilrun/recipe/gas"
)

// Conditions are what one step of a plan actually ran at, as a furnace
// controller log recorded them. A zero field keeps the plan's value.
type Conditions struct {
	// Step is the 0-based index of the step in the plan.
	Step int
	// Temperature is the mean temperature over the step (K, the control
	// thermocouple); 0 keeps the plan. The step's planned course is
	// shifted by the difference, so a ramp keeps its planned rate:
	//
	//	T0' = T0 + (T − (T0+T1)/2),  T1' = T1 + (T − (T0+T1)/2)
	Temperature float64
	// Pressure is the mean total pressure (Pa); 0 keeps the plan, or the
	// pump-limited pressure of the new flows for a step open to the pump.
	Pressure float64
	// Flows are the mean molar flows by gas symbol (mol/s, the true gas,
	// already corrected for the line's calibration gas). A gas the step
	// plans takes its logged flow; a planned gas missing from the map
	// keeps its planned flow; a gas the step does not plan is ignored: a
	// step's mean takes in a sample or two of its neighbours (a step
	// boundary is known to a sample either side), so a small reading of
	// an unplanned gas is more likely the next step's flow than a flow of
	// this one, and a real one is a deviation the log matcher reports.
	// Nil keeps every planned flow.
	Flows map[string]float64
}

// WithConditions returns a copy of the plan in which the steps named in
// cs run at the logged conditions, with every gas-phase number of those
// steps derived again from them by the same derivation as Derive (mole
// fractions, partial pressures p_i = x_i·P, CH4:H2 ratio, volumetric flow,
// residence time, Reynolds and Knudsen numbers, supersaturation, copper
// loss). Other steps, start times and durations are the plan's. The
// original plan is not changed. A condition naming a step outside the plan
// is ignored.
func (p *Plan) WithConditions(cs []Conditions) *Plan {
	out := *p
	out.Steps = append([]StepPlan(nil), p.Steps...)
	for _, c := range cs {
		if c.Step < 0 || c.Step >= len(out.Steps) {
			continue
		}
		sp := &out.Steps[c.Step]
		if c.Temperature > 0 {
			d := c.Temperature - sp.MeanTemperature()
			sp.T0, sp.T1 = sp.T0+d, sp.T1+d
		}
		sp.Flows = loggedFlows(sp.Flows, c.Flows)
		refill(sp, p.Furnace)
		switch {
		case c.Pressure > 0:
			sp.Pressure = c.Pressure
		case sp.OpenToPump:
			sp.Pressure = sp.PumpLimit
		}
		sp.PCH4, sp.PH2, sp.PCarbon = 0, 0, 0
		gasPhase(sp, p.Furnace)
	}
	return &out
}

// loggedFlows returns a new flow list: the planned flows with the logged
// ones of the same gases written in.
func loggedFlows(planned []FlowPlan, logged map[string]float64) []FlowPlan {
	out := make([]FlowPlan, 0, len(planned))
	for _, fl := range planned {
		if v, ok := logged[fl.Gas.Symbol]; ok {
			fl.Molar = math.Max(0, v)
		}
		out = append(out, FlowPlan{Gas: fl.Gas, Molar: fl.Molar})
	}
	return out
}

// refill derives what follows from a step's molar flows, as derive does
// from the recipe's: sccm, total flow, throughput, pump limit and the
// flammable and carbon-source flags.
func refill(sp *StepPlan, f *Furnace) {
	sp.TotalFlow, sp.Flammable, sp.CarbonSource = 0, false, false
	for i := range sp.Flows {
		fl := &sp.Flows[i]
		fl.SCCM = fl.Molar / molPerSCCMSecond
		sp.TotalFlow += fl.Molar
		if fl.Gas.Flammable && fl.Molar > 0 {
			sp.Flammable = true
		}
		if fl.Gas.Role == gas.CarbonSource && fl.Molar > 0 {
			sp.CarbonSource = true
		}
	}
	sp.Throughput = sp.TotalFlow * gas.R * RoomTemperature
	sp.PumpLimit = f.pumpLimit(sp.Throughput, sp.Flows, sp.TotalFlow)
}
