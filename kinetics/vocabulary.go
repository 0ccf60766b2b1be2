package kinetics

import (
	"fmt"
	"strings"

	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/recipe/gas"
)

// Term is one word of the vocabulary the package's parsers accept, with a
// one-line description and the unit values are shown in.
type Term struct {
	Name        string
	Description string
	Unit        string // display unit; "" for fractions
}

// The grow-step parameters Window and Suggest vary besides gas flows.
const (
	ParamTemperature = "temperature"
	ParamDuration    = "duration"
	ParamPressure    = "pressure"
)

// The metrics, spelled as the run log stores them.
const (
	MetricCoverage      = "coverage"
	MetricNucleiDensity = "nuclei_density"
	MetricDomainSize    = "domain_size"
)

// Parameters returns the recipe parameters ParseAxis and Suggest's Vary
// accept, in the order help texts list them. The last entry stands for
// every gas symbol of recipe/gas.
func Parameters() []Term {
	return []Term{
		{ParamTemperature, "grow-step temperature", "C"},
		{ParamDuration, "grow-step duration", "min"},
		{ParamPressure, "grow-step pressure set-point, from the base pressure (or the gauge's low end) to one atmosphere", "Pa"},
		{"CH4, H2, Ar, …", "that gas's flow in the grow step (any gas symbol or name the gas table knows)", "sccm"},
	}
}

// Metrics returns the predicted and measured quantities that targets,
// window maps and fits name, in the order help texts list them.
func Metrics() []Term {
	return []Term{
		{MetricCoverage, "covered fraction of the foil, 0 to 1 (write 0.95 or 95%)", ""},
		{MetricNucleiDensity, "graphene nuclei (domains) per area", "/mm2"},
		{MetricDomainSize, "area-equivalent domain diameter sqrt(4·θ/(π·N))", "um"},
	}
}

// renamed maps the old spellings of parameters and metrics to the names
// in use; the parsers refuse them with a message naming the new one.
var renamed = map[string]string{
	"time":           ParamDuration,
	"density":        MetricNucleiDensity,
	"nuclei-density": MetricNucleiDensity,
	"domain-size":    MetricDomainSize,
	"size":           MetricDomainSize,
}

// renamedErr returns the error for an old spelling, or nil.
func renamedErr(kind InputKind, context, what, name string) *InputError {
	now, ok := renamed[strings.ToLower(name)]
	if !ok {
		return nil
	}
	return inputErr(kind, "%s: unknown %s %q; use %q", context, what, name, now).
		because(ReasonRenamed).hinted("the name is now " + now)
}

// ParseMetric returns the metric named (MetricCoverage,
// MetricNucleiDensity or MetricDomainSize; case and surrounding space do
// not matter). Old spellings (density, nuclei-density, domain-size, size)
// and unknown names are errors wrapping ErrMetric.
func ParseMetric(name string) (string, error) {
	n := strings.ToLower(strings.TrimSpace(name))
	for _, m := range Metrics() {
		if n == m.Name {
			return m.Name, nil
		}
	}
	ctx := fmt.Sprintf("metric %q", name)
	if err := renamedErr(KindMetric, ctx, "metric", name); err != nil {
		return "", err
	}
	return "", inputErr(KindMetric, "%s: unknown metric, want %s", ctx, metricList()).because(ReasonUnknownName)
}

func metricList() string {
	return MetricCoverage + ", " + MetricNucleiDensity + " or " + MetricDomainSize
}

// parameterOf resolves a parameter name of the vary vocabulary to its
// canonical name and dimension: temperature, duration, pressure, or a gas
// (its flow). The error names the input by context ("axis \"…\"").
func parameterOf(kind InputKind, context, name string) (string, recipe.Dimension, error) {
	switch strings.ToLower(name) {
	case ParamTemperature:
		return ParamTemperature, recipe.Temperature, nil
	case ParamDuration:
		return ParamDuration, recipe.Duration, nil
	case ParamPressure:
		return ParamPressure, recipe.Pressure, nil
	}
	if err := renamedErr(kind, context, "parameter", name); err != nil {
		return "", 0, err
	}
	g, err := gas.Lookup(name)
	if err != nil {
		return "", 0, inputErr(kind, "%s: unknown parameter %q, want temperature, duration, pressure or a gas such as CH4", context, name).
			because(ReasonUnknownName)
	}
	return g.Symbol, recipe.Flow, nil
}
