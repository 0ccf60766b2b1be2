package store

import (
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"

	"github.com/foilrun/foilrun/recipe"
)

// MetricInfo describes a known outcome metric: its canonical unit, the
// dimension its values are parsed in (through recipe, so every unit of
// that dimension is accepted), the range of sensible values, and a
// one-line description.
type MetricInfo struct {
	Name        string
	Unit        string           // canonical unit, as stored; "1" for a plain number or a fraction
	Dim         recipe.Dimension // recipe.Dimensionless: a bare number only
	Description string
	Min, Max    float64  // sensible range in the canonical unit
	LowerBetter bool     // smaller values are better (D/G, sheet resistance, nuclei density)
	units       []string // common spellings, for messages and listings
}

// Units lists common units the metric may be written in, "(none)" for a
// bare number. Every other unit of the metric's dimension is accepted too.
func (m MetricInfo) Units() []string { return append([]string(nil), m.units...) }

// Bounds of the metric ranges that have no natural upper end. They are
// generous physical limits, there so that every stored value is finite
// and a mean of any number of them stays finite (1e308 outcomes once
// averaged to +Inf):
//
//   - maxNucleiDensity: one nucleus per carbon atom of a graphene sheet,
//     2 atoms per hexagonal cell of area (√3/2)·a², a = 0.246 nm (the
//     graphene lattice constant, from memory; common textbook value):
//     3.8e19 /m² = 3.8e13 /mm²;
//   - maxDomainSize: 1 m = 1e6 µm, larger than any foil a tube furnace holds;
//   - maxRamanRatio: 1000 (measured 2D/G and D/G ratios are below 10;
//     common practice);
//   - maxRamanWidth: 1000 cm⁻¹ (graphene's 2D band is about 24–35 cm⁻¹ wide
//     in a monolayer and below about 100 cm⁻¹ in multilayer or disordered
//     films; a band 1000 cm⁻¹ wide spans most of the spectrum; common
//     practice);
//   - maxSheetResistance: 1e15 Ω/sq, an insulator;
//   - MaxFreeValue: the magnitude bound of a free-form metric's value.
const (
	maxNucleiDensity   = 3.8e13
	maxDomainSize      = 1e6
	maxRamanRatio      = 1000
	maxRamanWidth      = 1000
	maxSheetResistance = 1e15
	// MaxFreeValue bounds the magnitude of a free-form metric's value (and
	// of a parameter foilrun does not know): finite, and a mean of up to
	// 1e290 of them stays finite.
	MaxFreeValue = 1e15
)

// metrics are the known outcome metrics. Their canonical units are those
// the log has always stored them in, so stored values keep their meaning.
var metrics = []MetricInfo{
	{Name: "coverage", Unit: "1", Dim: recipe.Fraction, Description: "area fraction of the foil covered by graphene", Min: 0, Max: 1,
		units: []string{"(none)", "%", "ppm"}},
	{Name: "nuclei_density", Unit: "1/mm2", Dim: recipe.AreaDensity, Description: "domains (nuclei) per area", Min: 0, LowerBetter: true, Max: maxNucleiDensity,
		units: []string{"1/mm2", "/mm2", "mm-2", "/cm2", "/um2", "/m2"}},
	{Name: "island_density", Unit: "1/mm2", Dim: recipe.AreaDensity, Description: "separate graphene islands per area in a micrograph (merged islands count once)", Min: 0, Max: maxNucleiDensity,
		units: []string{"1/mm2", "/mm2", "mm-2", "/cm2", "/um2", "/m2"}},
	{Name: "domain_size", Unit: "um", Dim: recipe.Length, Description: "typical domain size (area-equivalent diameter)", Min: 0, Max: maxDomainSize,
		units: []string{"um", "µm", "nm", "mm", "m"}},
	{Name: "layers", Unit: "1", Dim: recipe.Dimensionless, Description: "number of graphene layers", Min: 0, Max: 100, units: []string{"(none)"}},
	{Name: "raman_2d_g", Unit: "1", Dim: recipe.Dimensionless, Description: "Raman 2D/G intensity ratio", Min: 0, Max: maxRamanRatio, units: []string{"(none)"}},
	{Name: "raman_d_g", Unit: "1", Dim: recipe.Dimensionless, Description: "Raman D/G intensity ratio", Min: 0, LowerBetter: true, Max: maxRamanRatio, units: []string{"(none)"}},
	{Name: "raman_2d_fwhm", Unit: "1/cm", Dim: recipe.Wavenumber, Description: "Raman 2D band full width at half maximum", Min: 0, LowerBetter: true, Max: maxRamanWidth,
		units: []string{"1/cm", "cm-1", "cm^-1", "/cm"}},
	{Name: "sheet_resistance", Unit: "ohm/sq", Dim: recipe.SheetResistance, Description: "sheet resistance after transfer", Min: 0, LowerBetter: true, Max: maxSheetResistance,
		units: []string{"ohm/sq", "Ω/sq", "kohm/sq", "kΩ/sq"}},
	{Name: "transmittance_550", Unit: "1", Dim: recipe.Fraction, Description: "optical transmittance at 550 nm", Min: 0, Max: 1,
		units: []string{"(none)", "%", "ppm"}},
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
// "nuclei_density=120/mm2" or "domain_size=15 um". A known metric takes any
// unit of its dimension that recipe.Parse reads (a fraction also a bare
// number or a percentage, recipe.ParseFraction); its value is converted to
// the canonical unit with recipe.In and checked against the metric's
// range. Any other metric is free-form and keeps the unit it was written
// with. Metric names are lower snake case
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
		if err := checkFreeOutcome(o); err != nil {
			return Outcome{}, fmt.Errorf("outcome %q: %v: %w", s, err, ErrInvalid)
		}
		return o, nil
	}
	o.Unit = m.Unit
	if o.Value, err = m.canonical(val, v, unit); err != nil {
		var ue *recipe.UnitError
		if errors.As(err, &ue) || m.Dim == recipe.Dimensionless {
			return Outcome{}, fmt.Errorf("outcome %q: %s %s, not %s (units: %s): %w", s, name, m.kind(), written(unit), strings.Join(m.units, ", "), ErrInvalid)
		}
		return Outcome{}, fmt.Errorf("outcome %q: %s: %v: %w", s, name, err, ErrInvalid)
	}
	if o.Value < m.Min || o.Value > m.Max {
		hint := ""
		if m.Max == 1 && unit == "" && v > 1 && v <= 100 {
			hint = fmt.Sprintf("; write %g%% for a percentage", v)
		}
		return Outcome{}, fmt.Errorf("outcome %q: %s %g %s is outside %g to %g%s: %w", s, name, o.Value, m.Unit, m.Min, m.Max, hint, ErrInvalid)
	}
	return o, nil
}

// canonical returns a value of the metric, written as text (number v in
// unit), in the metric's canonical unit. A value written in the canonical
// unit (or a bare number where that is a plain number) is kept as written,
// not sent through SI and back, so a stored value re-parses to itself.
func (m MetricInfo) canonical(text string, v float64, unit string) (float64, error) {
	switch {
	case unit == m.Unit || unit == "" && m.Dim == recipe.Dimensionless:
		return v, nil
	case m.Dim == recipe.Fraction:
		return recipe.ParseFraction(text)
	}
	q, err := recipe.Parse(text, m.Dim)
	if err != nil {
		return 0, err
	}
	return recipe.In(q.SI, m.Unit)
}

// kind says what values of the metric are, for messages.
func (m MetricInfo) kind() string {
	switch m.Dim {
	case recipe.Dimensionless:
		return "is a plain number"
	case recipe.Fraction:
		return "is a fraction (a bare number or a percentage)"
	}
	return "is in " + m.Unit
}

// written names the unit a value was written in, for messages.
func written(unit string) string {
	if unit == "" {
		return "a bare number"
	}
	return strconv.Quote(unit)
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
