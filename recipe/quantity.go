package recipe

import (
	"fmt"
	"math"
	"strconv"
	"strings"
)

// Dimension is the physical kind of a quantity.
type Dimension int

// The dimensions a recipe, furnace or site file can hold.
const (
	Dimensionless         Dimension = iota // a plain number
	Temperature                            // SI: K
	TemperatureRate                        // SI: K/s
	Pressure                               // SI: Pa
	PressureRate                           // SI: Pa/s (leak-up rate)
	Flow                                   // SI: mol/s (standard flow)
	Length                                 // SI: m
	Duration                               // SI: s
	Fraction                               // SI: 1 (0.5 = 50 %)
	Volume                                 // SI: m³
	VolumeRate                             // SI: m³/s (pumping speed)
	Frequency                              // SI: 1/s (air changes per hour)
	TemperatureDifference                  // SI: K (a margin, no offset)
)

var dimensionNames = [...]string{
	Dimensionless:         "number",
	Temperature:           "temperature",
	TemperatureRate:       "temperature rate",
	Pressure:              "pressure",
	PressureRate:          "pressure rise rate",
	Flow:                  "flow",
	Length:                "length",
	Duration:              "duration",
	Fraction:              "fraction",
	Volume:                "volume",
	VolumeRate:            "pumping speed",
	Frequency:             "rate per time",
	TemperatureDifference: "temperature difference",
}

var dimensionExamples = [...]string{
	Dimensionless:         "3",
	Temperature:           "1000 C",
	TemperatureRate:       "15 C/min",
	Pressure:              "500 mTorr",
	PressureRate:          "5 mTorr/min",
	Flow:                  "20 sccm",
	Length:                "25 um",
	Duration:              "30 min",
	Fraction:              "2 %",
	Volume:                "40 m3",
	VolumeRate:            "5 m3/h",
	Frequency:             "6 /h",
	TemperatureDifference: "10 K",
}

// String names the dimension in plain words.
func (d Dimension) String() string {
	if d < 0 || int(d) >= len(dimensionNames) {
		return fmt.Sprintf("dimension(%d)", int(d))
	}
	return dimensionNames[d]
}

// Example returns a quantity of this dimension as a person would write it.
func (d Dimension) Example() string {
	if d < 0 || int(d) >= len(dimensionExamples) {
		return ""
	}
	return dimensionExamples[d]
}

// unit converts a value written in the unit to SI: si = v*Scale + Offset.
type unit struct {
	dim    Dimension
	scale  float64
	offset float64
}

// molPerSCCMSecond is the molar flow of 1 sccm in mol/s: 1 cm³/min of ideal
// gas at 0 °C and 101325 Pa (the SEMI convention stated by MFC makers).
const molPerSCCMSecond = 101325e-6 / (8.314462618 * 273.15) / 60

const torr = 101325.0 / 760

var units = map[string]unit{
	// temperature
	"K": {Temperature, 1, 0}, "C": {Temperature, 1, 273.15}, "°C": {Temperature, 1, 273.15},
	"degC": {Temperature, 1, 273.15}, "F": {Temperature, 5.0 / 9, 273.15 - 32*5.0/9}, "°F": {Temperature, 5.0 / 9, 273.15 - 32*5.0/9},
	// temperature rate
	"K/s": {TemperatureRate, 1, 0}, "C/s": {TemperatureRate, 1, 0}, "K/min": {TemperatureRate, 1.0 / 60, 0},
	"C/min": {TemperatureRate, 1.0 / 60, 0}, "°C/min": {TemperatureRate, 1.0 / 60, 0}, "degC/min": {TemperatureRate, 1.0 / 60, 0},
	"K/h": {TemperatureRate, 1.0 / 3600, 0}, "C/h": {TemperatureRate, 1.0 / 3600, 0}, "°C/s": {TemperatureRate, 1, 0},
	// pressure
	"Pa": {Pressure, 1, 0}, "hPa": {Pressure, 100, 0}, "kPa": {Pressure, 1000, 0}, "MPa": {Pressure, 1e6, 0},
	"mbar": {Pressure, 100, 0}, "bar": {Pressure, 1e5, 0}, "Torr": {Pressure, torr, 0}, "torr": {Pressure, torr, 0},
	"mTorr": {Pressure, torr / 1000, 0}, "mtorr": {Pressure, torr / 1000, 0}, "atm": {Pressure, 101325, 0},
	"psi": {Pressure, 6894.757293168361, 0}, "ubar": {Pressure, 0.1, 0},
	// pressure rise rate
	"Pa/s": {PressureRate, 1, 0}, "Pa/min": {PressureRate, 1.0 / 60, 0}, "mbar/min": {PressureRate, 100.0 / 60, 0},
	"Torr/min": {PressureRate, torr / 60, 0}, "mTorr/min": {PressureRate, torr / 1000 / 60, 0},
	"mTorr/s": {PressureRate, torr / 1000, 0}, "mbar/s": {PressureRate, 100, 0},
	// flow (standard)
	"sccm": {Flow, molPerSCCMSecond, 0}, "slm": {Flow, 1000 * molPerSCCMSecond, 0}, "slpm": {Flow, 1000 * molPerSCCMSecond, 0},
	"mol/s": {Flow, 1, 0}, "mol/min": {Flow, 1.0 / 60, 0}, "mmol/s": {Flow, 1e-3, 0},
	// length
	"m": {Length, 1, 0}, "cm": {Length, 1e-2, 0}, "mm": {Length, 1e-3, 0}, "um": {Length, 1e-6, 0},
	"µm": {Length, 1e-6, 0}, "μm": {Length, 1e-6, 0}, "nm": {Length, 1e-9, 0}, "in": {Length, 0.0254, 0},
	// duration
	"s": {Duration, 1, 0}, "sec": {Duration, 1, 0}, "ms": {Duration, 1e-3, 0}, "min": {Duration, 60, 0},
	"h": {Duration, 3600, 0}, "hr": {Duration, 3600, 0},
	// fraction
	"%": {Fraction, 0.01, 0}, "ppm": {Fraction, 1e-6, 0},
	// volume
	"m3": {Volume, 1, 0}, "m³": {Volume, 1, 0}, "L": {Volume, 1e-3, 0}, "l": {Volume, 1e-3, 0}, "cm3": {Volume, 1e-6, 0},
	// pumping speed
	"m3/s": {VolumeRate, 1, 0}, "m3/h": {VolumeRate, 1.0 / 3600, 0}, "m³/h": {VolumeRate, 1.0 / 3600, 0},
	"L/s": {VolumeRate, 1e-3, 0}, "l/s": {VolumeRate, 1e-3, 0}, "L/min": {VolumeRate, 1e-3 / 60, 0},
	"cfm": {VolumeRate, 0.028316846592 / 60, 0},
	// per time (air changes)
	"/h": {Frequency, 1.0 / 3600, 0}, "1/h": {Frequency, 1.0 / 3600, 0}, "/s": {Frequency, 1, 0},
	"1/s": {Frequency, 1, 0}, "/min": {Frequency, 1.0 / 60, 0}, "1/min": {Frequency, 1.0 / 60, 0},
	"ACH": {Frequency, 1.0 / 3600, 0},
}

// unitsOf lists, for messages, the common units of a dimension.
var unitsOf = map[Dimension]string{
	Temperature:           "C, K",
	TemperatureRate:       "C/min, K/min, C/s",
	Pressure:              "Pa, kPa, mbar, bar, Torr, mTorr, atm",
	PressureRate:          "mTorr/min, Pa/s, mbar/min",
	Flow:                  "sccm, slm, mol/s",
	Length:                "m, mm, um, nm",
	Duration:              "s, min, h",
	Fraction:              "%, ppm",
	Volume:                "m3, L",
	VolumeRate:            "m3/h, L/s, m3/s",
	Frequency:             "/h, /min, /s",
	TemperatureDifference: "K, C",
}

// Quantity is a number with a unit, parsed once from the text a person
// wrote. SI holds the value in SI units of its Dimension; Text keeps the
// original for messages.
type Quantity struct {
	SI   float64
	Dim  Dimension
	Text string
	Pos  Pos // where it was written; zero when made in code
}

// Pos is a place in a file: 1-based line and column.
type Pos struct {
	Line, Col int
}

// String formats the place as "line L col C", or "" when unknown.
func (p Pos) String() string {
	if p.Line == 0 {
		return ""
	}
	return fmt.Sprintf("line %d col %d", p.Line, p.Col)
}

// String returns the quantity as it was written, or in SI when it was made
// in code.
func (q Quantity) String() string {
	if q.Text != "" {
		return q.Text
	}
	return strconv.FormatFloat(q.SI, 'g', 6, 64)
}

// IsZero reports whether the quantity was never set.
func (q Quantity) IsZero() bool { return q.Text == "" && q.SI == 0 }

// UnitError is returned by Parse when a quantity has the wrong dimension or
// an unknown unit.
type UnitError struct {
	Text string    // the text as written
	Want Dimension // the dimension the field needs
	Got  Dimension // the dimension the unit has, or -1 for an unknown unit
	Unit string    // the unit as written
}

func (e *UnitError) Error() string {
	if e.Got < 0 {
		if e.Unit == "" {
			return fmt.Sprintf("%q has no unit, want a %s such as %q (units: %s)", e.Text, e.Want, e.Want.Example(), unitsOf[e.Want])
		}
		return fmt.Sprintf("%q has unknown unit %q, want a %s such as %q (units: %s)", e.Text, e.Unit, e.Want, e.Want.Example(), unitsOf[e.Want])
	}
	return fmt.Sprintf("%q is a %s, want a %s such as %q", e.Text, e.Got, e.Want, e.Want.Example())
}

// Parse reads a quantity such as "1000 C", "500 mTorr" or "35sccm" and
// converts it to SI. want is the dimension the caller needs; Dimensionless
// accepts a bare number. A number without a unit, an unknown unit or a unit
// of another dimension is an error (*UnitError, or a plain error for a bad
// number).
func Parse(text string, want Dimension) (Quantity, error) {
	s := strings.TrimSpace(text)
	if s == "" {
		return Quantity{}, fmt.Errorf("empty value, want a %s such as %q", want, want.Example())
	}
	num, u := splitNumber(s)
	if num == "" {
		return Quantity{}, fmt.Errorf("%q does not start with a number, want a %s such as %q", text, want, want.Example())
	}
	v, err := strconv.ParseFloat(num, 64)
	if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
		return Quantity{}, fmt.Errorf("%q: %q is not a finite number", text, num)
	}
	u = strings.TrimSpace(u)
	if want == Dimensionless {
		if u != "" {
			return Quantity{}, fmt.Errorf("%q: want a plain number without a unit", text)
		}
		return Quantity{SI: v, Dim: Dimensionless, Text: s}, nil
	}
	if u == "" {
		return Quantity{}, &UnitError{Text: s, Want: want, Got: -1}
	}
	un, ok := units[u]
	if !ok {
		un, ok = units[strings.ReplaceAll(u, " ", "")]
	}
	if !ok {
		return Quantity{}, &UnitError{Text: s, Want: want, Got: -1, Unit: u}
	}
	if want == TemperatureDifference && un.dim == Temperature {
		return Quantity{SI: v * un.scale, Dim: want, Text: s}, nil
	}
	if un.dim != want {
		return Quantity{}, &UnitError{Text: s, Want: want, Got: un.dim, Unit: u}
	}
	return Quantity{SI: v*un.scale + un.offset, Dim: want, Text: s}, nil
}

// MustParse is Parse for constants in code and tests; it panics on error.
func MustParse(text string, want Dimension) Quantity {
	q, err := Parse(text, want)
	if err != nil {
		panic(err)
	}
	return q
}

// splitNumber splits "12.5e-3 Torr" into "12.5e-3" and " Torr".
func splitNumber(s string) (num, rest string) {
	i := 0
	if i < len(s) && (s[i] == '+' || s[i] == '-') {
		i++
	}
	digits := false
	for i < len(s) && (s[i] >= '0' && s[i] <= '9' || s[i] == '.') {
		if s[i] != '.' {
			digits = true
		}
		i++
	}
	if !digits {
		return "", s
	}
	if i < len(s) && (s[i] == 'e' || s[i] == 'E') {
		j := i + 1
		if j < len(s) && (s[j] == '+' || s[j] == '-') {
			j++
		}
		k := j
		for k < len(s) && s[k] >= '0' && s[k] <= '9' {
			k++
		}
		if k > j {
			i = k
		}
	}
	return s[:i], s[i:]
}

// DimensionByName returns the dimension with the given plain name, as used
// in the schema's dim tags ("temperature", "flow", ...).
func DimensionByName(name string) (Dimension, bool) {
	for i, n := range dimensionNames {
		if n == name {
			return Dimension(i), true
		}
	}
	return 0, false
}

// ConvertTo expresses an SI value in the named unit, for output. It
// returns false when the unit is unknown.
func ConvertTo(si float64, unitName string) (float64, bool) {
	u, ok := units[unitName]
	if !ok {
		return 0, false
	}
	return (si - u.offset) / u.scale, true
}

// UnitDimension returns the dimension of a unit name such as "sccm".
func UnitDimension(unitName string) (Dimension, bool) {
	u, ok := units[unitName]
	return u.dim, ok
}
