package recipe

import (
	"math"
	"testing"
)

func TestFurnaceDefaultsAndCeiling(t *testing.T) {
	base := func(heater, tube, margin string) string {
		m := ""
		if margin != "" {
			m = ", thermocouple_margin: " + margin
		}
		return `name: test furnace
tube: {material: fused quartz, inner_diameter: 22 mm, heated_length: 300 mm, service_limit: ` + tube + `}
heater: {max_temperature: ` + heater + `, max_ramp_up: 20 C/min, max_ramp_down: 10 C/min` + m + `}
gas_lines:
  - {gas: H2, full_scale: 100 sccm}
vacuum: {pump_speed: 5 m3/h, base_pressure: 10 mTorr, gauge: capacitance manometer, gauge_min: 0.5 mTorr, gauge_max: 1100 mbar}
exhaust: {dilution_flow: 20 slm, dilution_gas: N2}
`
	}
	tests := []struct {
		name                 string
		heater, tube, margin string
		want                 float64 // K
		reason               string
	}{
		// ITS-90 freezing point of copper 1357.77 K less the margin.
		{"copper binds, default margin", "1200 C", "1200 C", "", 1357.77 - 10, "copper melting point 1084.62 C less the 10 K thermocouple margin"},
		{"copper binds, own margin", "1200 C", "1200 C", "5 K", 1357.77 - 5, "copper melting point 1084.62 C less the 5 K thermocouple margin"},
		{"heater binds", "1050 C", "1200 C", "", 1323.15, "heater maximum 1050.0 C"},
		{"tube binds", "1100 C", "1000 C", "", 1273.15, "tube service limit 1000.0 C"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			f, err := ParseFurnace("f.yaml", []byte(base(tt.heater, tt.tube, tt.margin)))
			if err != nil {
				t.Fatal(err)
			}
			got, reason := f.TemperatureCeiling()
			if math.Abs(got-tt.want) > 1e-9 || reason != tt.reason {
				t.Errorf("TemperatureCeiling() = %v, %q; want %v, %q", got, reason, tt.want, tt.reason)
			}
			if f.Lines[0].LowEnd.SI != DefaultLowEnd {
				t.Errorf("low end %v, want the default %v", f.Lines[0].LowEnd.SI, DefaultLowEnd)
			}
		})
	}
}

func TestFirstStep(t *testing.T) {
	r := &Recipe{Steps: []Step{{Kind: KindPump}, {Kind: KindGrow}, {Kind: KindGrow}}}
	if got := r.FirstStep(KindGrow); got != 1 {
		t.Errorf("FirstStep(grow) = %d, want 1", got)
	}
	if got := r.FirstStep(KindVent); got != -1 {
		t.Errorf("FirstStep(vent) = %d, want -1", got)
	}
}
