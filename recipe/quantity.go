package recipe

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"github.com/foilrun/foilrun/recipe/gas"
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
	Energy                                 // SI: J (per particle; eV and kJ/mol convert)
	AreaDensity                            // SI: 1/m² (nuclei per area)
	AreaRate                               // SI: 1/(m²·s) (nucleation rate)
	Speed                                  // SI: m/s (domain edge velocity)
	SheetResistance                        // SI: Ω (ohm per square)
	Wavenumber                             // SI: 1/m (Raman band widths, written in cm⁻¹)
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
	Energy:                "energy",
	AreaDensity:           "density per area",
	AreaRate:              "rate per area",
	Speed:                 "speed",
	SheetResistance:       "sheet resistance",
	Wavenumber:            "wavenumber",
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
	Energy:                "1.2 eV",
	AreaDensity:           "1e4 /mm2",
	AreaRate:              "50 /m2/s",
	Speed:                 "2 um/min",
	SheetResistance:       "350 ohm/sq",
	Wavenumber:            "30 cm-1",
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

// toSI converts a value written in the unit to SI. A scale that is the
// reciprocal of a whole number (%, ppm, per minute, per hour, milli-) is
// applied by dividing by that number, which IEEE arithmetic rounds
// correctly: "95 %" is exactly 0.95, not 0.9500000000000001.
func (u unit) toSI(v float64) float64 {
	if n, ok := u.divisor(); ok {
		return v/n + u.offset
	}
	return v*u.scale + u.offset
}

// fromSI is the inverse of toSI.
func (u unit) fromSI(si float64) float64 {
	if n, ok := u.divisor(); ok {
		return (si - u.offset) * n
	}
	return (si - u.offset) / u.scale
}

// divisor returns 1/scale when it is a whole number above 1.
func (u unit) divisor() (float64, bool) {
	if u.scale >= 1 || u.scale <= 0 {
		return 0, false
	}
	n := math.Round(1 / u.scale)
	return n, math.Abs(n*u.scale-1) < 1e-12
}

// molPerSCCMSecond is the molar flow of 1 sccm in mol/s: 1 cm³/min of ideal
// gas at 0 °C and 101325 Pa (the SEMI convention stated by MFC makers).
const molPerSCCMSecond = gas.MolPerSCCMPerSecond

// torr is one torr in Pa: 101325/760 by definition.
const torr = gas.StandardAtmosphere / 760

// zeroC is 0 °C in K (ITS-90 and the SI definition of the Celsius scale).
const zeroC = gas.ZeroCelsius

// units maps every unit name Parse accepts to its dimension and its
// conversion to SI. Names are matched exactly: SI prefixes are never
// case-folded ("mbar" is not "Mbar"); the lab spellings "SCCM", "SLM" and
// "micron" (of mercury, a vacuum unit equal to 1 mTorr, common practice)
// are listed explicitly. The per-area, speed and energy families are added
// by init from the length prefixes below.
var units = map[string]unit{
	// temperature
	"K": {Temperature, 1, 0}, "C": {Temperature, 1, zeroC}, "°C": {Temperature, 1, zeroC},
	"degC": {Temperature, 1, zeroC}, "F": {Temperature, 5.0 / 9, zeroC - 32*5.0/9}, "°F": {Temperature, 5.0 / 9, zeroC - 32*5.0/9},
	// temperature rate
	"K/s": {TemperatureRate, 1, 0}, "C/s": {TemperatureRate, 1, 0}, "K/min": {TemperatureRate, 1.0 / 60, 0},
	"C/min": {TemperatureRate, 1.0 / 60, 0}, "°C/min": {TemperatureRate, 1.0 / 60, 0}, "degC/min": {TemperatureRate, 1.0 / 60, 0},
	"K/h": {TemperatureRate, 1.0 / 3600, 0}, "C/h": {TemperatureRate, 1.0 / 3600, 0}, "°C/s": {TemperatureRate, 1, 0},
	// pressure
	"Pa": {Pressure, 1, 0}, "hPa": {Pressure, 100, 0}, "kPa": {Pressure, 1000, 0}, "MPa": {Pressure, 1e6, 0},
	"mbar": {Pressure, 100, 0}, "bar": {Pressure, 1e5, 0}, "Torr": {Pressure, torr, 0}, "torr": {Pressure, torr, 0},
	"mTorr": {Pressure, torr / 1000, 0}, "mtorr": {Pressure, torr / 1000, 0}, "atm": {Pressure, gas.StandardAtmosphere, 0},
	"psi": {Pressure, 6894.757293168361, 0}, "ubar": {Pressure, 0.1, 0},
	"micron": {Pressure, torr / 1000, 0}, "microns": {Pressure, torr / 1000, 0},
	// pressure rise rate
	"Pa/s": {PressureRate, 1, 0}, "Pa/min": {PressureRate, 1.0 / 60, 0}, "mbar/min": {PressureRate, 100.0 / 60, 0},
	"Torr/min": {PressureRate, torr / 60, 0}, "mTorr/min": {PressureRate, torr / 1000 / 60, 0},
	"mTorr/s": {PressureRate, torr / 1000, 0}, "mbar/s": {PressureRate, 100, 0},
	// flow (standard)
	"sccm": {Flow, molPerSCCMSecond, 0}, "slm": {Flow, 1000 * molPerSCCMSecond, 0}, "slpm": {Flow, 1000 * molPerSCCMSecond, 0},
	"SCCM": {Flow, molPerSCCMSecond, 0}, "SLM": {Flow, 1000 * molPerSCCMSecond, 0}, "SLPM": {Flow, 1000 * molPerSCCMSecond, 0},
	"mol/s": {Flow, 1, 0}, "mol/min": {Flow, 1.0 / 60, 0}, "mmol/s": {Flow, 1e-3, 0},
	// length
	"in": {Length, 0.0254, 0},
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
	// energy per particle: eV by the exact elementary charge; kJ/mol and
	// kcal/mol by the exact Avogadro constant (thermochemical calorie
	// 4.184 J, exact by definition)
	"J": {Energy, 1, 0}, "eV": {Energy, gas.ElementaryCharge, 0}, "meV": {Energy, 1e-3 * gas.ElementaryCharge, 0},
	"kJ/mol": {Energy, 1e3 / gas.Avogadro, 0}, "J/mol": {Energy, 1 / gas.Avogadro, 0}, "kcal/mol": {Energy, 4184 / gas.Avogadro, 0},
	// sheet resistance
	"ohm/sq": {SheetResistance, 1, 0}, "Ω/sq": {SheetResistance, 1, 0}, "ohm/□": {SheetResistance, 1, 0},
	"Ω/□": {SheetResistance, 1, 0}, "ohm": {SheetResistance, 1, 0}, "kohm/sq": {SheetResistance, 1e3, 0},
	"kΩ/sq": {SheetResistance, 1e3, 0},
	// wavenumber (spectroscopy): 1 cm⁻¹ = 100 m⁻¹ (exact)
	"1/cm": {Wavenumber, 100, 0}, "/cm": {Wavenumber, 100, 0}, "cm-1": {Wavenumber, 100, 0}, "cm^-1": {Wavenumber, 100, 0},
	"cm⁻¹": {Wavenumber, 100, 0}, "1/m": {Wavenumber, 1, 0}, "m-1": {Wavenumber, 1, 0},
}

// lengthPrefixes are the length units from which the per-area, speed and
// plain length units are built (exact SI prefixes).
var lengthPrefixes = []struct {
	names []string
	m     float64
}{
	{[]string{"m"}, 1}, {[]string{"cm"}, 1e-2}, {[]string{"mm"}, 1e-3},
	{[]string{"um", "µm", "μm"}, 1e-6}, {[]string{"nm"}, 1e-9},
}

func init() {
	for _, lp := range lengthPrefixes {
		a := 1 / (lp.m * lp.m)
		for _, n := range lp.names {
			units[n] = unit{Length, lp.m, 0}
			for _, d := range []string{"/" + n + "2", "1/" + n + "2", "/" + n + "²", "1/" + n + "²", n + "-2", n + "^-2"} {
				units[d] = unit{AreaDensity, a, 0}
				units[d+"/s"] = unit{AreaRate, a, 0}
				units[d+"/min"] = unit{AreaRate, a / 60, 0}
			}
			units[n+"/s"] = unit{Speed, lp.m, 0}
			units[n+"/min"] = unit{Speed, lp.m / 60, 0}
			units[n+"/h"] = unit{Speed, lp.m / 3600, 0}
		}
	}
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
	Energy:                "eV, meV, kJ/mol, J",
	AreaDensity:           "/m2, /cm2, /mm2, /um2",
	AreaRate:              "/m2/s, /cm2/s, /mm2/s, /um2/s",
	Speed:                 "m/s, mm/s, um/s, nm/s, um/min, mm/min",
	SheetResistance:       "ohm/sq, kohm/sq",
	Wavenumber:            "1/cm, cm-1",
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
		un.offset = 0
		un.dim = want
	}
	if un.dim != want {
		return Quantity{}, &UnitError{Text: s, Want: want, Got: un.dim, Unit: u}
	}
	si := un.toSI(v)
	if math.IsInf(si, 0) || math.IsNaN(si) {
		return Quantity{}, fmt.Errorf("%q is too large to hold as a %s", text, want)
	}
	return Quantity{SI: si, Dim: want, Text: s}, nil
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
	return u.fromSI(si), true
}

// UnitDimension returns the dimension of a unit name such as "sccm".
func UnitDimension(unitName string) (Dimension, bool) {
	u, ok := units[unitName]
	return u.dim, ok
}

// Format writes an SI value in the named unit as text that Parse reads back
// to the same value: Format(1273.15, "C") is "1000 C". It is the inverse of
// Parse for every unit Parse accepts. An unknown unit or a non-finite value
// is an error.
func Format(si float64, unitName string) (string, error) {
	v, err := In(si, unitName)
	if err != nil {
		return "", err
	}
	return strconv.FormatFloat(v, 'g', -1, 64) + " " + unitName, nil
}

// In expresses an SI value in the named unit, for output: In(1273.15, "C")
// is 1000. An unknown unit or a non-finite value is an error.
func In(si float64, unitName string) (float64, error) {
	u, ok := units[unitName]
	if !ok {
		return 0, fmt.Errorf("unknown unit %q", unitName)
	}
	if math.IsNaN(si) || math.IsInf(si, 0) {
		return 0, fmt.Errorf("%v is not a finite value to write in %s", si, unitName)
	}
	return u.fromSI(si), nil
}

// Celsius converts a temperature in K to °C.
func Celsius(k float64) float64 { return k - zeroC }

// Kelvin converts a temperature in °C to K.
func Kelvin(c float64) float64 { return c + zeroC }

// ParseFraction reads a fraction as people write one on a command line: a
// bare number ("0.3") is the fraction itself, a number with a unit of
// fraction ("30%", "30 %", "300000 ppm") is converted. The result must be
// finite; the caller checks its range.
func ParseFraction(text string) (float64, error) {
	s := strings.TrimSpace(text)
	num, rest := splitNumber(s)
	if num != "" && strings.TrimSpace(rest) == "" {
		v, err := strconv.ParseFloat(num, 64)
		if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
			return 0, fmt.Errorf("%q is not a finite number", text)
		}
		return v, nil
	}
	q, err := Parse(s, Fraction)
	if err != nil {
		return 0, err
	}
	return q.SI, nil
}
