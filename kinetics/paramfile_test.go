package kinetics

import (
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"strconv"
	"strings"
	"testing"

	"github.com/foilrun/foilrun/recipe"
)

// The defaults survive a round trip through their file form, bit for bit.
func TestParamsRoundTrip(t *testing.T) {
	p := DefaultParams()
	p.Covariance = &Covariance{Names: []string{"nucleation_energy", "growth_energy"}, Matrix: [][]float64{{0.01, 0.002}, {0.002, 0.02}}}
	p.Runs, p.Date = 12, "2026-03-02"
	p.Bounds = map[string][2]float64{"nucleation_energy": {-5, 8}, "nucleation_prefactor": {1e-300, 1e300}, "methane_order": {0, 4}, "growth_prefactor": {1e-3, 1.5e20}}
	got, err := ParseParams("defaults.yaml", FormatParams(p))
	if err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(got, p) {
		t.Errorf("round trip:\ngot  %+v\nwant %+v", got, p)
	}
}

// Units are converted at the boundary: 1 eV = 96.485332 kJ/mol (e·N_A,
// exact SI 2019), 1 /mm2 = 1e6 /m2, 1 um/min = 1e-6/60 m/s.
func TestParamsUnits(t *testing.T) {
	file := `nucleation_energy: -144.7279983 kJ/mol
nucleation_prefactor: 5e-5 /mm2/s
methane_order: 2.5
hydrogen_order: 2
growth_energy: 4500 meV
growth_prefactor: 6.6e18 um/min
reference_pressure: 0.750061683 Torr
shape: hexagonal
mode: site-saturated
site_density: 1e4 /mm2
`
	p, err := ParseParams("units.yaml", []byte(file))
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		name      string
		got, want float64
	}{
		{"En", p.En, -1.5}, {"I0", p.I0, 50}, {"Eg", p.Eg, 4.5}, {"G0", p.G0, 1.1e11},
		{"p0", p.P0, 100}, {"N0", p.SiteDensity, 1e10},
	} {
		if relErr(c.got, c.want) > 1e-6 {
			t.Errorf("%s: got %.9g, want %.9g", c.name, c.got, c.want)
		}
	}
	if p.Shape != Hexagonal || p.Mode != SiteSaturated {
		t.Errorf("got shape %q mode %q", p.Shape, p.Mode)
	}
}

const goodParams = `nucleation_energy: -1.5 eV
nucleation_prefactor: 50 /m2/s
methane_order: 2.5
hydrogen_order: 2
growth_energy: 4.5 eV
growth_prefactor: 1.1e11 m/s
reference_pressure: 100 Pa
`

// Bad parameter files: every problem with its line and column, exact text.
func TestParamsStrict(t *testing.T) {
	for _, c := range []struct{ name, file, want string }{
		{"unknown field", goodParams + "growth_energie: 4 eV\n",
			`load params "p.yaml": line 8 col 1: unknown field "growth_energie" in the params file
  hint: known fields: nucleation_energy, nucleation_prefactor, methane_order, hydrogen_order, growth_energy, growth_prefactor, reference_pressure, shape, mode, site_density, source, runs, date, coverage_only, bounds, covariance`},
		{"bounds unknown", goodParams + "bounds:\n  reference_pressure: [1 Pa, 2 Pa]\n",
			`load params "p.yaml": line 9 col 3: bounds names unknown parameter "reference_pressure", want one of En (nucleation_energy), I0 (nucleation_prefactor), a (methane_order), b (hydrogen_order), Eg (growth_energy), G0 (growth_prefactor), N0 (site_density)`},
		{"bounds reversed", goodParams + "bounds:\n  growth_energy: [8 eV, -5 eV]\n",
			`load params "p.yaml": line 9 col 18: bounds of growth_energy: lower "8 eV" is not below upper "-5 eV"`},
		{"bounds not a pair", goodParams + "bounds:\n  methane_order: [0, 2, 4]\n",
			`load params "p.yaml": line 9 col 18: bounds of methane_order must be a list [lo, hi] of two values`},
		{"bounds zero prefactor", goodParams + "bounds:\n  growth_prefactor: [0 m/s, 1 m/s]\n",
			`load params "p.yaml": line 9 col 22: bounds of growth_prefactor: the lower bound "0 m/s" must be greater than zero`},
		{"bad unit", strings.Replace(goodParams, "4.5 eV", "4.5 eJ", 1),
			`load params "p.yaml": line 5 col 16: growth_energy "4.5 eJ" has unknown unit "eJ", want a energy such as "1.2 eV" (units: eV, meV, kJ/mol, J)`},
		{"no unit", strings.Replace(goodParams, "1.1e11 m/s", "1.1e11", 1),
			`load params "p.yaml": line 6 col 19: growth_prefactor "1.1e11" has no unit, want a speed such as "2 um/min" (units: m/s, mm/s, um/s, nm/s, um/min, mm/min)`},
		{"bad number", strings.Replace(goodParams, "2.5", "two", 1),
			`load params "p.yaml": line 3 col 16: methane_order "two" is not a finite number
  hint: write a plain number such as 2`},
		{"negative prefactor", strings.Replace(goodParams, "50 /m2/s", "-50 /m2/s", 1),
			`load params "p.yaml": line 2 col 23: nucleation_prefactor "-50 /m2/s" must be greater than zero`},
		{"wrong dimension", strings.Replace(goodParams, "100 Pa", "100 sccm", 1),
			`load params "p.yaml": line 7 col 21: reference_pressure "100 sccm" is a flow, want a pressure such as "500 mTorr"`},
		{"missing", strings.Replace(goodParams, "hydrogen_order: 2\n", "", 1),
			`load params "p.yaml": line 1 col 1: missing required field "hydrogen_order" in the params file
  hint: add a line "hydrogen_order: …"`},
		{"bad shape", goodParams + "shape: square\n",
			`load params "p.yaml": line 8 col 8: shape "square" is not round or hexagonal`},
		{"site density needed", goodParams + "mode: site-saturated\n",
			`load params "p.yaml": line 1 col 1: mode site-saturated needs site_density
  hint: add a line such as "site_density: 1e4 /mm2"`},
		{"twice", goodParams + "methane_order: 1\n",
			`load params "p.yaml": line 8 col 1: field "methane_order" is given twice`},
		{"covariance", goodParams + "covariance:\n  parameters: [growth_energy, shape]\n  matrix: [[1, 0], [0, 1]]\n",
			`load params "p.yaml": line 9 col 31: covariance names unknown parameter "shape", want one of nucleation_energy, nucleation_prefactor, methane_order, hydrogen_order, growth_energy, growth_prefactor, reference_pressure`},
		{"asymmetric", goodParams + "covariance:\n  parameters: [growth_energy, nucleation_energy]\n  matrix: [[1, 0.5], [0, 1]]\n",
			`load params "p.yaml": line 10 col 23: covariance.matrix is not symmetric: row 2 col 1 is 0, row 1 col 2 is 0.5`},
		{"empty", "  \n", `load params "p.yaml": the file is empty
  hint: list the seven model parameters, one per line, such as "growth_energy: 4.5 eV"`},
	} {
		_, err := ParseParams("p.yaml", []byte(c.file))
		if err == nil || err.Error() != c.want {
			t.Errorf("%s:\ngot  %v\nwant %s", c.name, err, c.want)
			continue
		}
		if !errors.Is(err, recipe.ErrInvalid) {
			t.Errorf("%s: error does not wrap recipe.ErrInvalid", c.name)
		}
	}
}

func TestLoadParams(t *testing.T) {
	path := filepath.Join(t.TempDir(), "params.yaml")
	if err := os.WriteFile(path, FormatParams(DefaultParams()), 0o644); err != nil {
		t.Fatal(err)
	}
	p, err := LoadParams(path)
	if err != nil || !reflect.DeepEqual(p, DefaultParams()) {
		t.Errorf("got %+v, %v; want the defaults", p, err)
	}
	if _, err := LoadParams(filepath.Join(t.TempDir(), "none.yaml")); err == nil || !strings.HasPrefix(err.Error(), "load params: open ") {
		t.Errorf("missing file: got %v", err)
	}
}

func TestValidate(t *testing.T) {
	for _, c := range []struct {
		name string
		mod  func(*Params)
		want string
	}{
		{"zero G0", func(p *Params) { p.G0 = 0 }, "kinetics parameters: growth_prefactor 0 must be greater than zero"},
		{"NaN En", func(p *Params) { p.En = math.NaN() }, "kinetics parameters: nucleation_energy NaN is not a finite number"},
		{"shape", func(p *Params) { p.Shape = "oval" }, `kinetics parameters: unknown shape "oval", want round or hexagonal`},
		{"site density", func(p *Params) { p.Mode, p.SiteDensity = SiteSaturated, 0 }, "kinetics parameters: site_density 0 must be greater than zero"},
	} {
		p := DefaultParams()
		c.mod(&p)
		if err := p.Validate(); err == nil || err.Error() != c.want {
			t.Errorf("%s: got %v, want %s", c.name, err, c.want)
		}
		if _, err := PredictProfile(isothermal(1273, 50, 30, 60), p, Options{}); err == nil {
			t.Errorf("%s: Predict accepted invalid parameters", c.name)
		}
	}
	if err := DefaultParams().Validate(); err != nil {
		t.Errorf("defaults: %v", err)
	}
}

// Fuzz: ParseParams never panics, and what it accepts survives a round trip
// through FormatParams.
func FuzzParseParams(f *testing.F) {
	f.Add([]byte(goodParams))
	f.Add(FormatParams(DefaultParams()))
	f.Add([]byte(goodParams + "covariance:\n  parameters: [growth_energy]\n  matrix: [[1]]\nsource: \"x\\ty\"\n"))
	f.Add([]byte("nucleation_energy: 4eV\n"))
	f.Add([]byte(goodParams + "bounds:\n  growth_energy: [-300 meV, 8 eV]\n  growth_prefactor: [1e4 um/min, 1e300]\n  methane_order: [0, 50%]\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		p, err := ParseParams("fuzz.yaml", data)
		if err != nil {
			return
		}
		q, err := ParseParams("again.yaml", FormatParams(p))
		if err != nil {
			t.Fatalf("formatted params do not parse: %v\n%s", err, FormatParams(p))
		}
		if !reflect.DeepEqual(p, q) {
			t.Fatalf("round trip:\ngot  %+v\nwant %+v", q, p)
		}
	})
}

// Fuzz: ParseAxis never panics, and an accepted axis has Steps finite
// values, the first From and the last To exactly, all within the range.
// The corpus under testdata/fuzz/FuzzParseAxis holds the inputs CI's
// fuzzing found (a last value of −1.06e-22 below the range; From = +Inf).
func FuzzParseAxis(f *testing.F) {
	for _, s := range []string{"temperature=950C:1050C:11", "CH4=1sccm:40sccm:10", "duration=1min:30min:12", "pressure=100mTorr:2Torr:8", "x=::",
		"CH4=1sccm:0sccm:14", "duration=1e308h:1h:2", "time=1min:2min:3"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, spec string) {
		a, err := ParseAxis(spec)
		if err != nil {
			return
		}
		if err := checkAxisValues(a); err != "" {
			t.Fatalf("%q: %s", spec, err)
		}
	})
}

// checkAxisValues returns what is wrong with an axis's values, or "".
func checkAxisValues(a Axis) string {
	v := a.Values()
	lo, hi := math.Min(a.From, a.To), math.Max(a.From, a.To)
	if len(v) != a.Steps || v[0] != a.From || v[len(v)-1] != a.To {
		return fmt.Sprintf("values %v for %g..%g ×%d", v, a.From, a.To, a.Steps)
	}
	for i, x := range v {
		if math.IsNaN(x) || math.IsInf(x, 0) || x < lo || x > hi {
			return fmt.Sprintf("value %d is %g, outside %g..%g", i, x, lo, hi)
		}
	}
	return ""
}

// Fuzz: ParseTarget never panics; an accepted target is finite and in its
// domain, and written back in SI units it parses to the same target.
func FuzzParseTarget(f *testing.F) {
	for _, s := range []string{"coverage>=0.99", "coverage>=99%", "coverage>=95 %", "domain_size>=40um", "nuclei_density<=100/mm2",
		"nuclei_density<=1e308/um2", "domain-size>=1mm", "coverage=0.9", ">=", "coverage>=1e-320"} {
		f.Add(s)
	}
	unit := map[string]string{MetricCoverage: "", MetricDomainSize: " m", MetricNucleiDensity: " /m2"}
	f.Fuzz(func(t *testing.T, s string) {
		tg, err := ParseTarget(s)
		if err != nil {
			return
		}
		if math.IsNaN(tg.Value) || math.IsInf(tg.Value, 0) || !(tg.Value > 0) || tg.Quantity == MetricCoverage && !(tg.Value < 1) {
			t.Fatalf("%q: accepted %+v", s, tg)
		}
		op := "<="
		if tg.AtLeast {
			op = ">="
		}
		text := tg.Quantity + op + strconv.FormatFloat(tg.Value, 'g', -1, 64) + unit[tg.Quantity]
		back, err := ParseTarget(text)
		if err != nil || back.Quantity != tg.Quantity || back.AtLeast != tg.AtLeast || back.Value != tg.Value {
			t.Fatalf("%q → %q: got %+v, %v, want %+v", s, text, back, err, tg)
		}
	})
}

// Fuzz: ParseFix never panics; an accepted value is finite (positive for
// prefactors), and KEY=VALUE written back as a plain number in the file's
// unit parses to the same key and value.
func FuzzParseFix(f *testing.F) {
	for _, s := range []string{"Eg=1.9", "growth_energy=1.9 eV", "en=-150 meV", "I0=5 /cm2/s", "b=2", "G0=2um/min", "N0=1e4 mm-2",
		"Ea=1", "Eg", "G0=-1", "a=x", "En=1e308 kJ/mol", "=", "a=nan"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		key, v, err := ParseFix(s)
		if err != nil {
			return
		}
		i := fitIndex(key)
		if i < 0 || math.IsNaN(v) || math.IsInf(v, 0) || FitParameters[i].Log && !(v > 0) {
			t.Fatalf("%q: accepted %s = %g", s, key, v)
		}
		text := key + "=" + strconv.FormatFloat(v, 'g', -1, 64)
		k2, v2, err := ParseFix(text)
		if err != nil || k2 != key || v2 != v {
			t.Fatalf("%q → %q: got %s = %g, %v, want %s = %g", s, text, k2, v2, err, key, v)
		}
	})
}
