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
	out := map[string]float64{}
	put := func(name string, v float64) {
		if !math.IsNaN(v) && !math.IsInf(v, 0) {
			out[name] = v
		}
	}
	var grow, anneal, ramp, cool *StepPlan
	var growTime, annealTime float64
	for i := range p.Steps {
		sp := &p.Steps[i]
		switch sp.Step.Kind {
		case KindGrow:
			growTime += sp.Duration
			if grow == nil {
				grow = sp
			}
		case KindAnneal:
			annealTime += sp.Duration
			if anneal == nil {
				anneal = sp
			}
		case KindRamp:
			if ramp == nil {
				ramp = sp
			}
		case KindCool:
			if cool == nil {
				cool = sp
			}
		}
	}
	if grow != nil {
		put("growth_temperature_c", grow.T0-celsiusOffset)
		put("growth_time_min", growTime/60)
		put("growth_pressure_torr", grow.Pressure/torrPa)
		put("ch4_partial_pa", grow.PCH4)
		put("h2_partial_pa", grow.PH2)
		put("ch4_h2_ratio", grow.CH4H2Ratio)
		put("ch4_flow_sccm", flowSCCM(grow, "CH4"))
		put("h2_flow_sccm", flowSCCM(grow, "H2"))
		put("ar_flow_sccm", flowSCCM(grow, "Ar"))
		put("total_flow_sccm", grow.TotalFlow/molPerSCCMSecond)
		put("ch4_supersaturation", grow.Supersaturation)
		if grow.Residence > 0 {
			put("growth_residence_s", grow.Residence)
		}
	}
	if anneal != nil {
		put("anneal_temperature_c", anneal.T0-celsiusOffset)
		put("anneal_time_min", annealTime/60)
		put("anneal_pressure_torr", anneal.Pressure/torrPa)
		put("anneal_h2_flow_sccm", flowSCCM(anneal, "H2"))
	}
	if ramp != nil && ramp.Duration > 0 {
		put("ramp_rate_c_min", math.Abs(ramp.T1-ramp.T0)/ramp.Duration*60)
	}
	if cool != nil && cool.Duration > 0 {
		put("cool_rate_c_min", math.Abs(cool.T1-cool.T0)/cool.Duration*60)
	}
	put("total_time_min", p.Total/60)
	if p.Recipe != nil {
		put("foil_thickness_um", p.Recipe.Substrate.Thickness.SI*1e6)
		if !p.Recipe.Substrate.Purity.IsZero() {
			put("foil_purity_pct", p.Recipe.Substrate.Purity.SI*100)
		}
	}
	return out
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
