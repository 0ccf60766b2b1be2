package store

import (
	"fmt"
	"github.com/foilrun/foilrun/recipe"
	"math"
	"sort"
	"strconv"
	"strings"
)

// MetricInfo describes a known outcome metric: its canonical unit, the
// units it may be written in (factor to the canonical unit), the range of
// sensible values, and a one-line description.
type MetricInfo struct {
	Name        string
	Unit        string // canonical unit; "1" for a plain number
	Description string
	Min, Max    float64 // sensible range in the canonical unit
	LowerBetter bool    // smaller values are better (D/G, sheet resistance, nuclei density)
	units       map[string]float64
}

// Units lists the units the metric may be written in.
func (m MetricInfo) Units() []string {
	var us []string
	for u := range m.units {
		if u == "" {
			us = append(us, "(none)")
			continue
		}
		us = append(us, u)
	}
	sort.Strings(us)
	return us
}

var (
	fractionUnits = map[string]float64{"": 1, "%": 0.01}
	numberUnits   = map[string]float64{"": 1}
)

// metrics are the known outcome metrics. Unit factors are exact SI prefix
// conversions (common practice).
var metrics = []MetricInfo{
	{Name: "coverage", Unit: "1", Description: "area fraction of the foil covered by graphene", Min: 0, Max: 1, units: fractionUnits},
	{Name: "nuclei_density", Unit: "1/mm2", Description: "domains (nuclei) per area", Min: 0, LowerBetter: true, Max: math.Inf(1),
		units: map[string]float64{"1/mm2": 1, "/mm2": 1, "1/mm²": 1, "/mm²": 1, "mm-2": 1, "1/cm2": 1e-2, "/cm2": 1e-2, "1/cm²": 1e-2, "/cm²": 1e-2, "cm-2": 1e-2,
			"1/um2": 1e6, "/um2": 1e6, "1/µm2": 1e6, "1/µm²": 1e6, "um-2": 1e6, "1/m2": 1e-6, "/m2": 1e-6, "m-2": 1e-6}},
	{Name: "domain_size", Unit: "um", Description: "typical domain size (area-equivalent diameter)", Min: 0, Max: math.Inf(1),
		units: map[string]float64{"um": 1, "µm": 1, "μm": 1, "nm": 1e-3, "mm": 1e3, "m": 1e6}},
	{Name: "layers", Unit: "1", Description: "number of graphene layers", Min: 0, Max: 100, units: numberUnits},
	{Name: "raman_2d_g", Unit: "1", Description: "Raman 2D/G intensity ratio", Min: 0, Max: math.Inf(1), units: numberUnits},
	{Name: "raman_d_g", Unit: "1", Description: "Raman D/G intensity ratio", Min: 0, LowerBetter: true, Max: math.Inf(1), units: numberUnits},
	{Name: "sheet_resistance", Unit: "ohm/sq", Description: "sheet resistance after transfer", Min: 0, LowerBetter: true, Max: math.Inf(1),
		units: map[string]float64{"ohm/sq": 1, "Ω/sq": 1, "ohm/□": 1, "Ω/□": 1, "ohm": 1, "kohm/sq": 1e3, "kΩ/sq": 1e3}},
	{Name: "transmittance_550", Unit: "1", Description: "optical transmittance at 550 nm", Min: 0, Max: 1, units: fractionUnits},
}

// Metrics lists the known outcome metrics.
func Metrics() []MetricInfo { return append([]MetricInfo(nil), metrics...) }

// MetricByName returns the known metric with that name.
func MetricByName(name string) (MetricInfo, bool) {
	for _, m := range metrics {
		if m.Name == name {
			return m, true
		}
	}
	return MetricInfo{}, false
}

// ParseOutcome reads "metric=value[unit]" such as "coverage=93%",
// "nuclei_density=120/mm2" or "domain_size=15 um". A known metric must use
// one of its units (its value is converted to the canonical unit and
// checked against the metric's range); any other metric is free-form and
// keeps the unit it was written with. Metric names are lower snake case
// and must not be a recipe parameter name (isParam).
func ParseOutcome(s string, isParam func(string) bool) (Outcome, error) {
	name, val, ok := strings.Cut(s, "=")
	name = strings.TrimSpace(name)
	if !ok || name == "" {
		return Outcome{}, fmt.Errorf("outcome %q: want metric=value[unit], e.g. coverage=0.93 or domain_size=12um: %w", s, ErrInvalid)
	}
	if !validName(name) {
		return Outcome{}, fmt.Errorf("outcome %q: metric name %q must be lower case letters, digits and _: %w", s, name, ErrInvalid)
	}
	if isParam != nil && isParam(name) {
		return Outcome{}, fmt.Errorf("outcome %q: %q is a recipe parameter, not a measured outcome: %w", s, name, ErrInvalid)
	}
	val = strings.TrimSpace(val)
	numText, unit := recipe.SplitNumber(val)
	unit = strings.TrimSpace(unit)
	v, err := strconv.ParseFloat(numText, 64)
	if numText == "" || err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
		return Outcome{}, fmt.Errorf("outcome %q: value %q is not a finite number: %w", s, val, ErrInvalid)
	}
	o := Outcome{Metric: name, Entered: val}
	m, known := MetricByName(name)
	if !known {
		o.Value, o.Unit = v, unit
		if o.Unit == "" {
			o.Unit = "1"
		}
		return o, nil
	}
	f, ok := m.units[unit]
	if !ok && unit == m.Unit {
		f, ok = 1, true
	}
	if !ok {
		return Outcome{}, fmt.Errorf("outcome %q: %s is in %s, not %q (units: %s): %w", s, name, m.Unit, unit, strings.Join(m.Units(), ", "), ErrInvalid)
	}
	o.Value, o.Unit = v*f, m.Unit
	if o.Value < m.Min || o.Value > m.Max {
		hint := ""
		if m.Max == 1 && unit == "" && v > 1 && v <= 100 {
			hint = fmt.Sprintf("; write %g%% for a percentage", v)
		}
		return Outcome{}, fmt.Errorf("outcome %q: %s %g %s is outside %g to %g%s: %w", s, name, o.Value, m.Unit, m.Min, m.Max, hint, ErrInvalid)
	}
	return o, nil
}

// validName reports whether s is a lower snake-case name.
func validName(s string) bool {
	if s == "" || !(s[0] >= 'a' && s[0] <= 'z') {
		return false
	}
	for i := 0; i < len(s); i++ {
		c := s[i]
		if !(c >= 'a' && c <= 'z' || c >= '0' && c <= '9' || c == '_') {
			return false
		}
	}
	return true
}
