package kinetics

import (
	"fmt"
	"strings"

	"github.com/foilrun/foilrun/recipe"
)

// Target is one requirement on the final prediction.
type Target struct {
	Quantity string  // MetricCoverage, MetricDomainSize or MetricNucleiDensity
	AtLeast  bool    // ">=" (true) or "<=" (false)
	Value    float64 // θ, m, or 1/m²
	Text     string  // as written
}

// ParseTarget reads METRIC>=VALUE or METRIC<=VALUE: "coverage>=0.99",
// "coverage>=99%", "domain_size>=40um" (any length unit),
// "nuclei_density<=100/mm2" (any density per area: /m2, /cm2, /mm2, mm-2,
// …). Coverage is a fraction strictly between 0 and 1, written as a number
// or a percentage; the other values are greater than zero. The old
// spellings (domain-size, size, nuclei-density, density) are refused with
// a message naming the new one. Errors are *InputError of kind KindTarget
// (wrapping ErrSuggest).
func ParseTarget(s string) (Target, error) {
	t := Target{Text: s}
	ctx := fmt.Sprintf("target %q", s)
	var name, val string
	if i := strings.Index(s, ">="); i >= 0 {
		name, val, t.AtLeast = s[:i], s[i+2:], true
	} else if i := strings.Index(s, "<="); i >= 0 {
		name, val = s[:i], s[i+2:]
	} else {
		return t, inputErr(KindTarget, "%s: want METRIC>=VALUE or METRIC<=VALUE, e.g. coverage>=0.99 or domain_size>=40um", ctx)
	}
	name, val = strings.ToLower(strings.TrimSpace(name)), strings.TrimSpace(val)
	if err := renamedErr(KindTarget, ctx, "metric", name); err != nil {
		return t, err
	}
	var x float64
	var err error
	switch name {
	case MetricCoverage:
		x, err = recipe.ParseFraction(val)
		if err == nil && !(x > 0 && x < 1) {
			return t, inputErr(KindTarget, "%s: coverage %g must lie strictly between 0 and 1 (full coverage is only reached in the limit)", ctx, x).
				hinted("write a fraction such as 0.99 or a percentage such as 99%")
		}
	case MetricDomainSize:
		x, err = parseSI(val, recipe.Length)
	case MetricNucleiDensity:
		x, err = parseSI(val, recipe.AreaDensity)
	default:
		return t, inputErr(KindTarget, "%s: unknown metric %q, want %s", ctx, name, metricList()).because(ReasonUnknownName)
	}
	if err != nil {
		return t, inputErr(KindTarget, "%s: %v", ctx, err)
	}
	if !(x > 0) {
		return t, inputErr(KindTarget, "%s: the value must be greater than zero", ctx)
	}
	t.Quantity, t.Value = name, x
	return t, nil
}

// parseSI returns the SI value of a quantity of the dimension.
func parseSI(text string, dim recipe.Dimension) (float64, error) {
	q, err := recipe.Parse(text, dim)
	return q.SI, err
}

// Predicts returns nil when p predicts the metric, and otherwise an
// *InputError of kind KindMetric (wrapping ErrMetric, Reason
// ReasonNotPredicted) with a hint. A coverage-only calibration
// (Params.CoverageOnly) predicts coverage and the time to reach it: from
// coverage alone only the product I·G² (continuous nucleation) or N0·G²
// (site-saturated) is identified, and θ depends on nothing else:
//
//	θ(t) = 1 − exp(−κ·I·G²·t³/3)                 (constant conditions)
//
// Nuclei density and domain size depend on I and G separately,
//
//	N∞ = Γ(4/3)·(3/κ)^(1/3)·(I/G)^(2/3),  d = sqrt(4·θ/(π·N)),
//
// so they are not predicted. Every other metric is predicted.
//
// References: W. A. Johnson, R. F. Mehl, Trans. AIME 135, 416 (1939);
// M. Avrami, J. Chem. Phys. 7, 1103 (1939) (the coverage law, from memory).
func (p Params) Predicts(metric string) error {
	if e := notPredicted(KindMetric, fmt.Sprintf("metric %q", metric), p, metric); e != nil {
		return e
	}
	return nil
}

// notPredicted is the error of a metric a coverage-only calibration cannot
// predict, nil for one it can; ctx starts the message.
func notPredicted(kind InputKind, ctx string, p Params, metric string) *InputError {
	if !p.CoverageOnly || (metric != MetricNucleiDensity && metric != MetricDomainSize) {
		return nil
	}
	return inputErr(kind, "%s: the parameters were calibrated on coverage only, which fixes the product of the nucleation and growth rates, not each; %s depends on them separately and is not predicted", ctx, metric).
		hinted("ask for coverage or the time to reach it, or fit with measured nuclei densities too (foilrun fit --metric coverage,nuclei_density)").
		because(ReasonNotPredicted)
}

// checkPredicted refuses a target the parameters do not predict.
func checkPredicted(targets []Target, p Params) error {
	for _, t := range targets {
		if e := notPredicted(KindTarget, fmt.Sprintf("target %q", t.Text), p, t.Quantity); e != nil {
			return e
		}
	}
	return nil
}
