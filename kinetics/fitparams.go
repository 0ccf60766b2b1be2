package kinetics

import (
	"fmt"
	"math"
	"strings"

	"github.com/foilrun/foilrun/recipe"
)

// The fit works on the parameter vector
//
//	v = (En, ln I0, a, b, Eg, ln G0, ln N0)
//
// (energies in eV, prefactors as natural logarithms of their SI values), in
// which ln I and ln G are linear:
//
//	ln I = ln I0 − En·u + a·ln(pC/p0) − b·ln(pH/p0),  u = 1/(k·T)
//	ln G = ln G0 − Eg·u + ln((pC − pCeq)/p0) − ½·ln(pH/p0)
//
// so the parameter-independent parts (u, the logarithms of the pressures,
// pCeq) are computed once per run (Prepared) and each evaluation only
// exponentiates and integrates.

// Indexes of the fit vector.
const (
	fitEn = iota
	fitLnI0
	fitA
	fitB
	fitEg
	fitLnG0
	fitLnN0
	nFit
)

type fitVec [nFit]float64

// FitParameter describes one parameter a fit can estimate or hold fixed.
type FitParameter struct {
	Key   string // parameter-file key, e.g. "growth_energy"
	Short string // short name, e.g. "Eg"
	Unit  string // unit of the value in the file: "eV", "/m2/s", "m/s", "/m2" or ""
	Log   bool   // fitted as the natural logarithm of the SI value
}

// FitParameters lists the parameters a fit knows, in fit order.
var FitParameters = [nFit]FitParameter{
	{"nucleation_energy", "En", "eV", false},
	{"nucleation_prefactor", "I0", "/m2/s", true},
	{"methane_order", "a", "", false},
	{"hydrogen_order", "b", "", false},
	{"growth_energy", "Eg", "eV", false},
	{"growth_prefactor", "G0", "m/s", true},
	{"site_density", "N0", "/m2", true},
}

// fitIndex returns the index of a parameter by key or short name (case
// insensitive), or -1.
func fitIndex(name string) int {
	for i, fp := range FitParameters {
		if strings.EqualFold(name, fp.Key) || strings.EqualFold(name, fp.Short) {
			return i
		}
	}
	return -1
}

func knownFitNames() string {
	var s []string
	for _, fp := range FitParameters {
		s = append(s, fp.Short+" ("+fp.Key+")")
	}
	return strings.Join(s, ", ")
}

// ParseFix reads NAME=VALUE for a parameter held fixed, e.g. "Eg=1.9",
// "growth_energy=1.9 eV" or "I0=5e10 /m2/s". NAME is a short name (En, I0,
// a, b, Eg, G0, N0) or a parameter-file key; VALUE is a plain number in the
// file's unit (eV, /m2/s, m/s, /m2) or a number with any unit of the
// parameter's dimension that recipe.Parse knows (meV, kJ/mol, /mm2/s,
// um/min, /cm2, …). It returns the file key and the value in the file's
// unit (eV for energies, SI otherwise). Errors are *InputError of kind
// KindFix (wrapping ErrFitInput).
func ParseFix(s string) (key string, value float64, err error) {
	name, val, ok := strings.Cut(s, "=")
	name, val = strings.TrimSpace(name), strings.TrimSpace(val)
	if !ok || name == "" || val == "" {
		return "", 0, inputErr(KindFix, "fix %q: want NAME=VALUE, e.g. Eg=1.9", s)
	}
	i := fitIndex(name)
	if i < 0 {
		return "", 0, inputErr(KindFix, "fix %q: unknown parameter %q, want one of %s", s, name, knownFitNames()).because(ReasonUnknownName)
	}
	fp := FitParameters[i]
	value, err = fp.parse(val)
	if err != nil {
		return "", 0, inputErr(KindFix, "fix %q: %v", s, err)
	}
	if fp.Log && !(value > 0) {
		return "", 0, inputErr(KindFix, "fix %q: %s must be a finite number greater than zero", s, fp.Short)
	}
	return fp.Key, value, nil
}

// parse reads a value of the parameter: a plain number in the file's
// unit, or a quantity of the parameter's dimension (see ParseFix). The
// result is finite.
func (fp FitParameter) parse(text string) (float64, error) {
	if q, err := recipe.Parse(text, recipe.Dimensionless); err == nil {
		return q.SI, nil
	}
	dim, ok := recipe.UnitDimension(fp.Unit)
	if !ok {
		return 0, fmt.Errorf("%q is not a number", text)
	}
	return parseParamValue(text, dim)
}

func vecOf(p Params) fitVec {
	return fitVec{p.En, math.Log(p.I0), p.A, p.B, p.Eg, math.Log(p.G0), math.Log(math.Max(p.SiteDensity, math.SmallestNonzeroFloat64))}
}

func (v fitVec) apply(p Params) Params {
	p.En, p.I0, p.A, p.B, p.Eg, p.G0 = v[fitEn], math.Exp(v[fitLnI0]), v[fitA], v[fitB], v[fitEg], math.Exp(v[fitLnG0])
	if p.Mode == SiteSaturated {
		p.SiteDensity = math.Exp(v[fitLnN0])
	}
	return p
}

// siValue returns parameter i of p in SI (not logarithmic) units.
func siValue(p Params, i int) float64 {
	return [nFit]float64{p.En, p.I0, p.A, p.B, p.Eg, p.G0, p.SiteDensity}[i]
}

// DefaultBounds are the bounds a fit keeps each parameter within unless
// FitSettings.Bounds overrides them, by file key, [lo, hi] in the file's
// units (eV for energies, SI for prefactors). They come from the model's
// own domain (Params), not from any one lab's data:
//
//	energies En, Eg    −5 … 8 eV   (effective values: En may be negative,
//	                                as in DefaultParams, so that nuclei
//	                                density falls as temperature rises)
//	orders a, b         0 … 4      (rates rise with methane and fall with
//	                                hydrogen, as the rate laws are written)
//	prefactors          1e-300 … 1e300 (positive, finite)
var DefaultBounds = map[string][2]float64{
	"nucleation_energy":    {-5, 8},
	"nucleation_prefactor": {1e-300, 1e300},
	"methane_order":        {0, 4},
	"hydrogen_order":       {0, 4},
	"growth_energy":        {-5, 8},
	"growth_prefactor":     {1e-300, 1e300},
	"site_density":         {1e-300, 1e300},
}

// ParseBound reads NAME=LO:HI, the bounds of one parameter, e.g.
// "En=-3:6" or "G0=1e5:1e15"; NAME as in ParseFix, LO and HI plain
// numbers or quantities of the parameter's dimension ("-300 meV"). It
// returns the file key and [lo, hi] in the file's unit. Errors are
// *InputError of kind KindFix.
func ParseBound(s string) (key string, b [2]float64, err error) {
	name, val, ok := strings.Cut(s, "=")
	name, val = strings.TrimSpace(name), strings.TrimSpace(val)
	lo, hi, ok2 := strings.Cut(val, ":")
	if !ok || !ok2 || name == "" {
		return "", b, inputErr(KindFix, "bound %q: want NAME=LO:HI, e.g. En=-3:6", s)
	}
	i := fitIndex(name)
	if i < 0 {
		return "", b, inputErr(KindFix, "bound %q: unknown parameter %q, want one of %s", s, name, knownFitNames()).because(ReasonUnknownName)
	}
	fp := FitParameters[i]
	for k, text := range []string{lo, hi} {
		if b[k], err = fp.parse(strings.TrimSpace(text)); err != nil {
			return "", b, inputErr(KindFix, "bound %q: %v", s, err)
		}
	}
	if fp.Log && !(b[0] > 0) {
		return "", b, inputErr(KindFix, "bound %q: the lower bound of %s must be greater than zero", s, fp.Short)
	}
	if !(b[0] < b[1]) {
		return "", b, inputErr(KindFix, "bound %q: lower %g is not below upper %g", s, b[0], b[1])
	}
	return fp.Key, b, nil
}
