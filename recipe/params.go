package recipe

import (
	"math"
	"strings"
)

// ParameterInfo describes one derived recipe parameter: its name (plain
// snake case with the unit at the end), the unit its values are in, and a
// one-line description.
type ParameterInfo struct {
	Name        string
	Unit        string
	Description string
}

// parameterInfo lists the parameters Parameters can return, in display
// order. "first grow step" is the first step of kind grow; times are summed
// over all steps of the kind.
var parameterInfo = []ParameterInfo{
	{"growth_temperature_c", "°C", "hold temperature of the first grow step"},
	{"growth_time_min", "min", "summed duration of all grow steps"},
	{"growth_pressure_torr", "Torr", "total pressure of the first grow step"},
	{"ch4_partial_pa", "Pa", "CH4 partial pressure in the first grow step"},
	{"h2_partial_pa", "Pa", "H2 partial pressure in the first grow step"},
	{"ch4_h2_ratio", "1", "CH4:H2 molar flow ratio in the first grow step (absent without H2)"},
	{"ch4_flow_sccm", "sccm", "CH4 set-point of the first grow step"},
	{"h2_flow_sccm", "sccm", "H2 set-point of the first grow step"},
	{"ar_flow_sccm", "sccm", "Ar set-point of the first grow step"},
	{"total_flow_sccm", "sccm", "summed set-points of the first grow step"},
	{"ch4_supersaturation", "1", "pCH4 over its graphite-equilibrium value in the first grow step (absent without CH4)"},
	{"growth_residence_s", "s", "gas residence time in the heated zone during the first grow step"},
	{"anneal_temperature_c", "°C", "hold temperature of the first anneal step"},
	{"anneal_time_min", "min", "summed duration of all anneal steps"},
	{"anneal_pressure_torr", "Torr", "total pressure of the first anneal step"},
	{"anneal_h2_flow_sccm", "sccm", "H2 set-point of the first anneal step"},
	{"ramp_rate_c_min", "°C/min", "heating rate of the first ramp step"},
	{"cool_rate_c_min", "°C/min", "cooling rate of the first cool step"},
	{"total_time_min", "min", "duration of the whole recipe"},
	{"foil_thickness_um", "um", "copper foil thickness"},
	{"foil_purity_pct", "%", "copper foil purity (absent when the recipe gives none)"},
}

// ParameterNames lists every parameter Parameters can return, with its unit
// and a one-line description, in display order.
func ParameterNames() []ParameterInfo {
	return append([]ParameterInfo(nil), parameterInfo...)
}

// IsParameter reports whether name is one of ParameterNames.
func IsParameter(name string) bool {
	for _, p := range parameterInfo {
		if p.Name == name {
			return true
		}
	}
	return false
}

const (
	celsiusOffset = 273.15
	torrPa        = 101325.0 / 760
)

// Parameters returns the plan's derived parameters by name (see
// ParameterNames for names, units and meaning), in the units their names
// carry rather than SI, so that a run log can store and query them as
// plain numbers. Parameters that do not apply are left out: the growth_*
// and gas-flow ones when the recipe has no grow step, ch4_h2_ratio without
// H2, and so on. Every value returned is finite.
func (p *Plan) Parameters() map[string]float64 {
	out := paramSet{}
	k := p.keySteps()
	if k.grow != nil {
		out.growth(k.grow, k.growTime)
	}
	if k.anneal != nil {
		out.put("anneal_temperature_c", k.anneal.T0-celsiusOffset)
		out.put("anneal_time_min", k.annealTime/60)
		out.put("anneal_pressure_torr", k.anneal.Pressure/torrPa)
		out.put("anneal_h2_flow_sccm", flowSCCM(k.anneal, "H2"))
	}
	if k.ramp != nil && k.ramp.Duration > 0 {
		out.put("ramp_rate_c_min", math.Abs(k.ramp.T1-k.ramp.T0)/k.ramp.Duration*60)
	}
	if k.cool != nil && k.cool.Duration > 0 {
		out.put("cool_rate_c_min", math.Abs(k.cool.T1-k.cool.T0)/k.cool.Duration*60)
	}
	out.put("total_time_min", p.Total/60)
	if p.Recipe != nil {
		out.put("foil_thickness_um", p.Recipe.Substrate.Thickness.SI*1e6)
		if !p.Recipe.Substrate.Purity.IsZero() {
			out.put("foil_purity_pct", p.Recipe.Substrate.Purity.SI*100)
		}
	}
	return out
}

// paramSet collects the parameters Parameters returns.
type paramSet map[string]float64

// put records v under name when it is finite.
func (ps paramSet) put(name string, v float64) {
	if !math.IsNaN(v) && !math.IsInf(v, 0) {
		ps[name] = v
	}
}

// growth records the growth_* and gas parameters of the first grow step;
// growTime is the summed duration of all grow steps, s.
func (ps paramSet) growth(grow *StepPlan, growTime float64) {
	ps.put("growth_temperature_c", grow.T0-celsiusOffset)
	ps.put("growth_time_min", growTime/60)
	ps.put("growth_pressure_torr", grow.Pressure/torrPa)
	ps.put("ch4_partial_pa", grow.PCH4)
	ps.put("h2_partial_pa", grow.PH2)
	ps.put("ch4_h2_ratio", grow.CH4H2Ratio)
	ps.put("ch4_flow_sccm", flowSCCM(grow, "CH4"))
	ps.put("h2_flow_sccm", flowSCCM(grow, "H2"))
	ps.put("ar_flow_sccm", flowSCCM(grow, "Ar"))
	ps.put("total_flow_sccm", grow.TotalFlow/molPerSCCMSecond)
	ps.put("ch4_supersaturation", grow.Supersaturation)
	if grow.Residence > 0 {
		ps.put("growth_residence_s", grow.Residence)
	}
}

// keySteps are the steps Parameters reads: the first of each kind (nil
// when the recipe has none) and the summed durations of the grow and of
// the anneal steps, s.
type keySteps struct {
	grow, anneal, ramp, cool *StepPlan
	growTime, annealTime     float64
}

// keySteps finds the plan's key steps.
func (p *Plan) keySteps() keySteps {
	var k keySteps
	for i := range p.Steps {
		sp := &p.Steps[i]
		switch sp.Step.Kind {
		case KindGrow:
			k.growTime += sp.Duration
			if k.grow == nil {
				k.grow = sp
			}
		case KindAnneal:
			k.annealTime += sp.Duration
			if k.anneal == nil {
				k.anneal = sp
			}
		case KindRamp:
			if k.ramp == nil {
				k.ramp = sp
			}
		case KindCool:
			if k.cool == nil {
				k.cool = sp
			}
		}
	}
	return k
}

// flowSCCM returns the step's set-point of the gas (canonical symbol) in
// sccm, 0 when the gas does not flow.
func flowSCCM(sp *StepPlan, symbol string) float64 {
	for _, f := range sp.Flows {
		if strings.EqualFold(f.Gas.Symbol, symbol) {
			return f.SCCM
		}
	}
	return 0
}
