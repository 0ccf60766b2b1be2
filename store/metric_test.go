package store

import (
	"errors"
	"math"
	"strconv"
	"strings"
	"testing"

	"github.com/foilrun/foilrun/recipe"
)

// Unit conversions below are exact SI prefix relations (SI Brochure, 9th
// ed., table 7): 1 mm² = 1e-2 cm² = 1e6 µm², 1 mm = 1e3 µm = 1e6 nm,
// 1 kΩ = 1e3 Ω, 1 cm⁻¹ = 100 m⁻¹, 1 % = 1e-2, 1 ppm = 1e-6. Tolerance 1e-12 relative (a
// conversion through SI and back may be off by an ulp).
func TestParseOutcome(t *testing.T) {
	tests := []struct {
		name  string
		in    string
		value float64
		unit  string
		err   string
	}{
		{"fraction bare", "coverage=0.93", 0.93, "1", ""},
		{"fraction percent", "coverage=93%", 0.93, "1", ""},
		{"fraction percent spaced", "transmittance_550=97.7 %", 0.977, "1", ""},
		{"fraction ppm", "coverage=300000 ppm", 0.3, "1", ""},
		{"density canonical", "nuclei_density=120/mm2", 120, "1/mm2", ""},
		{"density per cm2", "nuclei_density=1.2e4 1/cm2", 120, "1/mm2", ""},
		{"density mm-2", "nuclei_density=85 mm-2", 85, "1/mm2", ""},
		{"density per um2", "nuclei_density=2e-4 /um2", 200, "1/mm2", ""},
		{"size canonical", "domain_size=15 um", 15, "um", ""},
		{"size micro sign", "domain_size=15µm", 15, "um", ""},
		{"size mm", "domain_size=0.2mm", 200, "um", ""},
		{"size nm", "domain_size=1500 nm", 1.5, "um", ""},
		{"sheet kohm", "sheet_resistance=0.45 kohm/sq", 450, "ohm/sq", ""},
		{"plain number", "layers=1", 1, "1", ""},
		{"raman width cm-1", "raman_2d_fwhm=32 cm-1", 32, "1/cm", ""},
		{"raman width per m", "raman_2d_fwhm=3200 1/m", 32, "1/cm", ""},
		{"raman width bare", "raman_2d_fwhm=32", 0, "", "raman_2d_fwhm is in 1/cm, not a bare number"},
		{"raman width too wide", "raman_2d_fwhm=5000 cm-1", 0, "", "raman_2d_fwhm 5000 1/cm is outside 0 to 1000"},
		{"free-form keeps its unit", "peak_shift=3.5 cm-1", 3.5, "cm-1", ""},
		{"free-form bare", "spots=4", 4, "1", ""},
		{"wrong dimension", "domain_size=15 ohm/sq", 0, "", `domain_size is in um, not "ohm/sq" (units: um, µm, nm, mm, m)`},
		{"unknown unit", "nuclei_density=120 per mm", 0, "", `nuclei_density is in 1/mm2, not "per mm" (units: 1/mm2, /mm2`},
		{"missing unit", "nuclei_density=120", 0, "", "nuclei_density is in 1/mm2, not a bare number"},
		{"unit on a plain number", "layers=2 um", 0, "", `layers is a plain number, not "um" (units: (none))`},
		{"flow as a fraction", "coverage=5sccm", 0, "", `coverage is a fraction (a bare number or a percentage), not "sccm" (units: (none), %, ppm)`},
		{"percentage without %", "coverage=93", 0, "", "write 93% for a percentage"},
		{"above 100 %", "coverage=120%", 0, "", "coverage 1.2 1 is outside 0 to 1"},
		{"negative size", "domain_size=-3 um", 0, "", "domain_size -3 um is outside 0 to 1e+06"},
		// 1e308 of anything once averaged to +Inf; the bounds are physical
		// (store/metric.go names their sources)
		{"1e20 density", "nuclei_density=1e20/mm2", 0, "", "nuclei_density 1e+20 1/mm2 is outside 0 to 3.8e+13"},
		{"1e308 size", "domain_size=1e308um", 0, "", "is outside 0 to 1e+06"},
		{"1e308 free-form", "peak_shift=1e308 cm-1", 0, "", "peak_shift 1e+308 is not a finite number within ±1e+15"},
		{"too large in SI", "nuclei_density=1e303 /um2", 0, "", "too large"},
		{"no value", "coverage", 0, "", "want metric=value[unit]"},
		{"not a number", "coverage=high", 0, "", "not a finite number"},
		{"not finite", "domain_size=Inf um", 0, "", "not a finite number"},
		{"upper case name", "Coverage=1", 0, "", "lower case"},
		{"recipe parameter", "growth_time_min=3", 0, "", "is a recipe parameter"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			o, err := ParseOutcome(tt.in, recipe.IsParameter)
			if tt.err != "" {
				if err == nil || !strings.Contains(err.Error(), tt.err) || !errors.Is(err, ErrInvalid) {
					t.Errorf("ParseOutcome(%q): got %+v, %v; want an ErrInvalid containing %q", tt.in, o, err, tt.err)
				}
				return
			}
			if err != nil || math.Abs(o.Value-tt.value) > 1e-12*tt.value || o.Unit != tt.unit {
				t.Errorf("ParseOutcome(%q): got %+v, %v; want %g %s", tt.in, o, err, tt.value, tt.unit)
			}
		})
	}
}

// TestMetricUnits: every unit a metric lists for people is one it accepts,
// and 1 of it in the canonical unit is what its SI prefix says.
func TestMetricUnits(t *testing.T) {
	for _, m := range Metrics() {
		for _, u := range m.Units() {
			text := "1 " + u
			if u == "(none)" {
				text = "1"
			}
			o, err := ParseOutcome(m.Name+"="+text, nil)
			if err != nil && !strings.Contains(err.Error(), "outside") {
				t.Errorf("%s lists unit %q but refuses %q: %v", m.Name, u, text, err)
				continue
			}
			if err == nil && o.Unit != m.Unit {
				t.Errorf("%s=%s: got unit %q, want %q", m.Name, text, o.Unit, m.Unit)
			}
		}
	}
}

// FuzzParseOutcome: never panics; every refusal wraps ErrInvalid; an
// accepted known metric is finite, in its range and in its canonical unit,
// and its value written in that unit parses back to the same number.
func FuzzParseOutcome(f *testing.F) {
	for _, s := range []string{"coverage=0.93", "coverage=93%", "coverage=93", "transmittance_550=97.7 %", "nuclei_density=120/mm2",
		"nuclei_density=1.2e4 1/cm2", "nuclei_density=1e303 /um2", "domain_size=15 um", "domain_size=0.2mm", "domain_size=-0 um",
		"sheet_resistance=0.45 kohm/sq", "layers=1", "layers=2 um", "peak_shift=3.5 cm-1", "coverage=5sccm", "domain_size=1e-320 mm",
		"raman_2d_g=2.1", "coverage=", "=1", "x=NaN", "coverage=1e400", "nuclei_density=+.5e-3 mm^-2"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, in string) {
		o, err := ParseOutcome(in, recipe.IsParameter)
		if err != nil {
			if !errors.Is(err, ErrInvalid) {
				t.Fatalf("ParseOutcome(%q): error %v does not wrap ErrInvalid", in, err)
			}
			return
		}
		if math.IsNaN(o.Value) || math.IsInf(o.Value, 0) {
			t.Fatalf("ParseOutcome(%q): accepted non-finite %g", in, o.Value)
		}
		m, known := MetricByName(o.Metric)
		if !known {
			return
		}
		if o.Value < m.Min || o.Value > m.Max || o.Unit != m.Unit {
			t.Fatalf("ParseOutcome(%q) = %g %s, want %s within %g to %g", in, o.Value, o.Unit, m.Unit, m.Min, m.Max)
		}
		text := m.Name + "=" + strconv.FormatFloat(o.Value, 'g', -1, 64)
		if m.Unit != "1" {
			text += " " + m.Unit
		}
		back, err := ParseOutcome(text, recipe.IsParameter)
		if err != nil || back.Value != o.Value || back.Unit != o.Unit {
			t.Fatalf("ParseOutcome(%q) = %g %s; its canonical text %q re-parses to %g %s, %v", in, o.Value, o.Unit, text, back.Value, back.Unit, err)
		}
	})
}
