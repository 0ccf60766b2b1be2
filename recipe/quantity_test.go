package recipe

import (
	"errors"
	"math"
	"testing"
)

func TestParseConversions(t *testing.T) {
	tests := []struct {
		name   string
		text   string
		dim    Dimension
		want   float64
		relTol float64
		source string
	}{
		{"celsius", "1000 C", Temperature, 1273.15, 1e-12, "SI: T/K = t/°C + 273.15 (BIPM SI Brochure, 9th ed.)"},
		{"kelvin", "1273.15 K", Temperature, 1273.15, 1e-12, "SI base unit"},
		{"degree sign", "25 °C", Temperature, 298.15, 1e-12, "SI Brochure"},
		{"copper point", "1084.62 C", Temperature, 1357.77, 1e-12, "ITS-90 freezing point of copper, 1357.77 K"},
		{"torr", "1 Torr", Pressure, 101325.0 / 760, 1e-12, "1 Torr = 101325/760 Pa (definition; NIST SP 811)"},
		{"millitorr", "500 mTorr", Pressure, 500 * 101325.0 / 760 / 1000, 1e-12, "NIST SP 811"},
		{"millibar", "0.7 mbar", Pressure, 70, 1e-12, "1 mbar = 100 Pa (NIST SP 811)"},
		{"kilopascal", "101.325 kPa", Pressure, 101325, 1e-12, "SI prefix"},
		{"atmosphere", "1 atm", Pressure, 101325, 1e-12, "standard atmosphere 101325 Pa (exact, CGPM 1954)"},
		{"psi", "14.6959 psi", Pressure, 101325, 1e-5, "1 psi = 6894.757 Pa (NIST SP 811)"},
		{"sccm", "1 sccm", Flow, 4.461503e-5 / 60, 1e-6, "1 sccm = 4.461503e-5 mol/min at 0 °C, 101.325 kPa (SEMI convention as stated in MFC makers' documents; derived)"},
		{"sccm no space", "35sccm", Flow, 35 * 4.461503e-5 / 60, 1e-6, "as above"},
		{"slm", "1.2 slm", Flow, 1200 * 4.461503e-5 / 60, 1e-6, "1 slm = 1000 sccm"},
		{"ramp", "15 C/min", TemperatureRate, 0.25, 1e-12, "15 K per 60 s"},
		{"micrometre", "25 um", Length, 25e-6, 1e-12, "SI prefix"},
		{"micro sign", "25 µm", Length, 25e-6, 1e-12, "SI prefix"},
		{"minutes", "30 min", Duration, 1800, 1e-12, "1 min = 60 s"},
		{"hours", "1.5 h", Duration, 5400, 1e-12, "1 h = 3600 s"},
		{"percent", "2 %", Fraction, 0.02, 1e-12, "definition of per cent"},
		{"ppm", "500 ppm", Fraction, 5e-4, 1e-12, "definition of ppm"},
		{"exponent", "1e-3 Torr", Pressure, 101325.0 / 760 / 1000, 1e-12, "NIST SP 811"},
		{"exponent no space", "5e-3Torr", Pressure, 5 * 101325.0 / 760 / 1000, 1e-12, "NIST SP 811"},
		{"pump speed", "5.5 m3/h", VolumeRate, 5.5 / 3600, 1e-12, "1 h = 3600 s"},
		{"air changes", "6 /h", Frequency, 6.0 / 3600, 1e-12, "1 h = 3600 s"},
		{"leak-up rate", "5 mTorr/min", PressureRate, 5 * 101325.0 / 760 / 1000 / 60, 1e-12, "NIST SP 811"},
		{"margin", "10 C", TemperatureDifference, 10, 1e-12, "a difference of 1 °C is 1 K (SI Brochure)"},
		{"fahrenheit", "212 F", Temperature, 373.15, 1e-12, "t/°F = 1.8·t/°C + 32 (NIST SP 811)"},
		{"SCCM capitals", "5 SCCM", Flow, 5 * 4.461503e-5 / 60, 1e-6, "lab spelling of sccm (common practice)"},
		{"SLM capitals", "2 SLM", Flow, 2000 * 4.461503e-5 / 60, 1e-6, "lab spelling of slm (common practice)"},
		{"micron of mercury", "30 micron", Pressure, 30 * 101325.0 / 760 / 1000, 1e-12, "1 micron (µmHg) taken as 1 mTorr (common practice)"},
		{"electronvolt", "1.5 eV", Energy, 1.5 * 1.602176634e-19, 1e-12, "1 eV = 1.602176634e-19 J (exact, SI 2019)"},
		{"kJ per mol", "96.485 kJ/mol", Energy, 1.602176634e-19, 1e-5, "1 eV per particle = 96.485 kJ/mol (CODATA 2018 Faraday constant 96485.33 C/mol)"},
		{"kcal per mol", "23.0605 kcal/mol", Energy, 1.602176634e-19, 1e-5, "1 eV per particle = 23.0605 kcal/mol (CODATA 2018, thermochemical calorie)"},
		{"per mm2", "1e4 /mm2", AreaDensity, 1e10, 1e-12, "1 mm² = 1e-6 m² (SI prefix)"},
		{"per cm2", "1e6 1/cm2", AreaDensity, 1e10, 1e-12, "1 cm² = 1e-4 m² (SI prefix)"},
		{"per um2 superscript", "2 /µm²", AreaDensity, 2e12, 1e-12, "1 µm² = 1e-12 m² (SI prefix)"},
		{"rate per cm2", "5 /cm2/s", AreaRate, 5e4, 1e-12, "SI prefix"},
		{"speed um/min", "6 um/min", Speed, 1e-7, 1e-12, "6e-6 m per 60 s"},
		{"speed nm/s", "100 nm/s", Speed, 1e-7, 1e-12, "SI prefix"},
		{"sheet resistance", "1.2 kohm/sq", SheetResistance, 1200, 1e-12, "SI prefix"},
		{"wavenumber", "32 cm-1", Wavenumber, 3200, 1e-12, "1 cm⁻¹ = 100 m⁻¹, exact"},
		{"wavenumber slash", "32 1/cm", Wavenumber, 3200, 1e-12, "1 cm⁻¹ = 100 m⁻¹, exact"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			q, err := Parse(tt.text, tt.dim)
			if err != nil {
				t.Fatalf("Parse(%q): %v", tt.text, err)
			}
			if math.Abs(q.SI-tt.want) > tt.relTol*math.Abs(tt.want) {
				t.Errorf("Parse(%q) = %.10g SI, want %.10g (%s)", tt.text, q.SI, tt.want, tt.source)
			}
		})
	}
}

func TestParseErrors(t *testing.T) {
	tests := []struct {
		text string
		dim  Dimension
		want string
	}{
		{"5 Torr", Flow, `"5 Torr" is a pressure, want a flow such as "20 sccm"`},
		{"20 sccm", Pressure, `"20 sccm" is a flow, want a pressure such as "500 mTorr"`},
		{"1000", Temperature, `"1000" has no unit, want a temperature such as "1000 C" (units: C, K)`},
		{"35 sscm", Flow, `"35 sscm" has unknown unit "sscm", want a flow such as "20 sccm" (units: sccm, slm, mol/s)`},
		{"hot", Temperature, `"hot" does not start with a number, want a temperature such as "1000 C"`},
		{"", Duration, `empty value, want a duration such as "30 min"`},
		{"1e999 K", Temperature, `"1e999 K": "1e999" is not a finite number`},
		{"3 sccm", Dimensionless, `"3 sccm": want a plain number without a unit`},
		{"1e308 h", Duration, `"1e308 h" is too large to hold as a duration`},
		{"5 Mbar", Pressure, `"5 Mbar" has unknown unit "Mbar", want a pressure such as "500 mTorr" (units: Pa, kPa, mbar, bar, Torr, mTorr, atm)`},
		{"5 Sccm", Flow, `"5 Sccm" has unknown unit "Sccm", want a flow such as "20 sccm" (units: sccm, slm, mol/s)`},
	}
	for _, tt := range tests {
		t.Run(tt.text, func(t *testing.T) {
			_, err := Parse(tt.text, tt.dim)
			if err == nil {
				t.Fatalf("Parse(%q) succeeded, want error %q", tt.text, tt.want)
			}
			if err.Error() != tt.want {
				t.Errorf("Parse(%q) error\n got %q\nwant %q", tt.text, err.Error(), tt.want)
			}
		})
	}
	var ue *UnitError
	if _, err := Parse("5 Torr", Flow); !errors.As(err, &ue) || ue.Got != Pressure {
		t.Errorf("Parse(\"5 Torr\", Flow) error %v, want *UnitError with Got=Pressure", err)
	}
}

func TestFormatRoundTrip(t *testing.T) {
	// Format is the inverse of Parse: every unit, several magnitudes.
	for name, u := range units {
		for _, v := range []float64{12.5, -3, 1e-7, 4.2e9} {
			si := u.toSI(v)
			text, err := Format(si, name)
			if err != nil {
				t.Fatalf("Format(%g, %q): %v", si, name, err)
			}
			q, err := Parse(text, u.dim)
			if err != nil {
				t.Fatalf("Parse(Format(%g, %q) = %q): %v", si, name, text, err)
			}
			if math.Abs(q.SI-si) > 1e-12*math.Abs(si) {
				t.Errorf("Parse(%q) = %.17g, want %.17g", text, q.SI, si)
			}
		}
	}
	if _, err := Format(math.Inf(1), "K"); err == nil {
		t.Error("Format(+Inf) succeeded, want an error")
	}
	if _, err := Format(1, "furlong"); err == nil {
		t.Error("Format(1, furlong) succeeded, want an error")
	}
}

func TestParseFraction(t *testing.T) {
	tests := []struct {
		text string
		want float64
	}{
		{"0.3", 0.3}, {"30%", 0.3}, {"30 %", 0.3}, {"2500 ppm", 0.0025}, // definitions of per cent and ppm
		{"95%", 0.95}, {"99%", 0.99}, {"7 %", 0.07}, // exactly the float the decimal fraction names
	}
	for _, tt := range tests {
		got, err := ParseFraction(tt.text)
		if err != nil || got != tt.want {
			t.Errorf("ParseFraction(%q) = %v, %v; want %v", tt.text, got, err, tt.want)
		}
	}
	for _, bad := range []string{"", "thirty", "30 sccm", "1e999"} {
		if _, err := ParseFraction(bad); err == nil {
			t.Errorf("ParseFraction(%q) succeeded, want an error", bad)
		}
	}
}

func TestCelsiusKelvin(t *testing.T) {
	// T/K = t/°C + 273.15 (BIPM SI Brochure, 9th ed.).
	if got := Kelvin(1084.62); math.Abs(got-1357.77) > 1e-9 {
		t.Errorf("Kelvin(1084.62) = %v, want 1357.77 (ITS-90 copper point)", got)
	}
	if got := Celsius(273.15); got != 0 {
		t.Errorf("Celsius(273.15) = %v, want 0", got)
	}
}

func TestConvertToRoundTrip(t *testing.T) {
	for _, u := range []string{"C", "K", "Torr", "mTorr", "sccm", "slm", "um", "min", "%", "F"} {
		d, ok := UnitDimension(u)
		if !ok {
			t.Fatalf("UnitDimension(%q) unknown", u)
		}
		q := MustParse("12.5 "+u, d)
		back, ok := ConvertTo(q.SI, u)
		if !ok || math.Abs(back-12.5) > 1e-9 {
			t.Errorf("ConvertTo(Parse(12.5 %s)) = %v, want 12.5", u, back)
		}
	}
}

// FuzzParse: the quantity parser never panics, and what it accepts
// converts back to the number written.
func FuzzParse(f *testing.F) {
	for _, s := range []string{"1000 C", "500 mTorr", "35sccm", "1.2 slm", "1e-3 Torr", "-5 K", "25 µm", "", "e", "1e", ".", "+.5 %", "3 m3/h"} {
		f.Add(s, int(Pressure))
	}
	f.Fuzz(func(t *testing.T, s string, d int) {
		dim := Dimension(((d % len(dimensionNames)) + len(dimensionNames)) % len(dimensionNames))
		q, err := Parse(s, dim)
		if err != nil {
			return
		}
		if math.IsNaN(q.SI) || math.IsInf(q.SI, 0) {
			t.Fatalf("Parse(%q) = %v, not finite", s, q.SI)
		}
		if q.Dim != dim {
			t.Fatalf("Parse(%q, %v) has dimension %v", s, dim, q.Dim)
		}
	})
}
