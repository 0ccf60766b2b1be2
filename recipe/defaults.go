package recipe

import (
	"fmt"

	"github.com/foilrun/foilrun/recipe/gas"
)

// Defaults used where a file leaves a value out.
const (
	DefaultStartTemperature   = 298.15 // K (25 °C)
	DefaultThermocoupleMargin = 10.0   // K
	DefaultLowEnd             = 0.02   // of full scale: thermal MFCs are not accurate below about 2 % (common practice)
	DefaultLineLength         = 1.0    // m
)

// applyDefaults fills the furnace values a file may leave out, once, after
// validation, so that every later reader sees the value in force: the
// thermocouple margin and each line's low end. The filled quantities have
// no position and say "(default)" in their text.
func (f *Furnace) applyDefaults() {
	if f.Heater.ThermocoupleMargin.IsZero() {
		f.Heater.ThermocoupleMargin = Quantity{SI: DefaultThermocoupleMargin, Dim: TemperatureDifference, Text: "10 K (default)"}
	}
	for i := range f.Lines {
		if f.Lines[i].LowEnd.IsZero() {
			f.Lines[i].LowEnd = Quantity{SI: DefaultLowEnd, Dim: Fraction, Text: "2 % (default)"}
		}
	}
}

// TemperatureCeiling returns the highest set temperature in K the furnace
// may be asked for, and the limit that sets it: the heater's maximum, the
// tube's continuous-service limit, or the ITS-90 freezing point of copper
// (1084.62 °C) less the thermocouple margin, whichever is lowest. The
// check reports an error at or above the copper bound; callers that search
// for temperatures stay below it.
func (f *Furnace) TemperatureCeiling() (k float64, reason string) {
	k, reason = f.Heater.MaxTemperature.SI, fmt.Sprintf("heater maximum %.1f C", Celsius(f.Heater.MaxTemperature.SI))
	if tl := f.Tube.ServiceLimit.SI; tl < k {
		k, reason = tl, fmt.Sprintf("tube service limit %.1f C", Celsius(tl))
	}
	margin := f.Heater.ThermocoupleMargin.SI
	if cu := gas.CopperMeltingPoint - margin; cu < k {
		k, reason = cu, fmt.Sprintf("copper melting point %.2f C less the %.0f K thermocouple margin", Celsius(gas.CopperMeltingPoint), margin)
	}
	return k, reason
}

// FirstStep returns the index of the recipe's first step of the kind, or
// -1 when it has none. The growth parameters of a recipe are those of its
// first grow step: FirstStep(KindGrow).
func (r *Recipe) FirstStep(kind StepKind) int {
	for i, s := range r.Steps {
		if s.Kind == kind {
			return i
		}
	}
	return -1
}
