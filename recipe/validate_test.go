package recipe

import (
	"os"
	"strings"
	"testing"
)

// The load-time rules, pinned message by message: every case is an
// invented input beside the exact error foilrun prints for it (the
// messages were read against the rules in validate.go and decode.go). The
// line and column numbers count in the case's own YAML text.

// recipeYAML is a recipe with name, furnace and (unless body gives one) a
// substrate, followed by body.
func recipeYAML(body string) string {
	head := "name: t\nfurnace: f.yaml\n"
	if !strings.Contains(body, "substrate:") {
		head += "substrate:\n  material: copper foil\n  thickness: 25 um\n"
	}
	return head + body
}

// loadError returns the error text of parsing data as kind, or "no error".
func loadError(kind string, data string) string {
	var err error
	switch kind {
	case "recipe":
		_, err = ParseRecipe("t.yaml", []byte(data))
	case "furnace":
		_, err = ParseFurnace("t.yaml", []byte(data))
	}
	if err == nil {
		return "no error"
	}
	return err.Error()
}

// TestRecipeStepRules: what each step kind needs and refuses, and the
// range checks on a recipe's quantities (validateRecipe).
func TestRecipeStepRules(t *testing.T) {
	cases := []struct {
		name, body, want string
	}{
		{"no steps",
			"steps: []\n",
			`load recipe "t.yaml": line 1 col 1: the recipe has no steps
  hint: add at least a ramp, a grow and a cool step`},
		{"pump needs until or duration, to and temperature do not apply",
			"steps:\n  - kind: pump\n    to: 100 C\n    temperature: 100 C\n",
			`load recipe "t.yaml": line 7 col 5: step 1 pump needs "until" (a pressure) or "duration"
  hint: add "until: 20 mTorr"
load recipe "t.yaml": line 8 col 9: step 1 pump: "to" does not apply to a pump step
load recipe "t.yaml": line 9 col 18: step 1 pump: "temperature" does not apply to a pump step`},
		{"leak check needs duration and max_rise and no flows",
			"steps:\n  - kind: leak-check\n    flows: {Ar: 10 sccm}\n",
			`load recipe "t.yaml": line 7 col 5: step 1 leak-check needs "duration"
  hint: add "duration: 5 min"
load recipe "t.yaml": line 7 col 5: step 1 leak-check needs "max_rise"
  hint: add "max_rise: 5 mTorr/min"
load recipe "t.yaml": line 8 col 13: step 1 leak-check: a leak check is done with the valves closed and no flow
  hint: remove the flows`},
		{"purge needs duration or cycles and an inert flow",
			"steps:\n  - kind: purge\n",
			`load recipe "t.yaml": line 7 col 5: step 1 purge needs "duration" (flow-through purge) or "cycles" (pump and backfill)
  hint: add "duration: 10 min"
load recipe "t.yaml": line 7 col 5: step 1 purge: a purge needs an inert gas flow
  hint: add "flows: {Ar: 500 sccm}"`},
		{"purge cycles need a backfill",
			"steps:\n  - kind: purge\n    cycles: 3\n    flows: {Ar: 500 sccm}\n",
			`load recipe "t.yaml": line 7 col 5: step 1 purge needs "backfill"
  hint: add "backfill: 1 atm"`},
		{"ramp needs to and rate, temperature does not apply",
			"steps:\n  - kind: ramp\n    temperature: 900 C\n",
			`load recipe "t.yaml": line 7 col 5: step 1 ramp needs "to"
  hint: add "to: 1000 C"
load recipe "t.yaml": line 7 col 5: step 1 ramp needs "rate"
  hint: add "rate: 15 C/min"
load recipe "t.yaml": line 8 col 18: step 1 ramp: "temperature" does not apply to a ramp step`},
		{"grow needs temperature and duration, to does not apply",
			"steps:\n  - kind: grow\n    name: main\n    to: 900 C\n    flows: {CH4: 5 sccm}\n",
			`load recipe "t.yaml": line 7 col 5: step 1 grow (main) needs "temperature"
  hint: add "temperature: 1000 C"
load recipe "t.yaml": line 7 col 5: step 1 grow (main) needs "duration"
  hint: add "duration: 30 min"
load recipe "t.yaml": line 9 col 9: step 1 grow (main): "to" does not apply to a grow step`},
		{"vent takes no temperature",
			"steps:\n  - kind: vent\n    temperature: 20 C\n    flows: {Ar: 1 slm}\n",
			"load recipe \"t.yaml\": line 8 col 18: step 1 vent: \"temperature\" does not apply to a vent step"},
		{"cycles only on a purge, and not negative",
			"steps:\n  - kind: vent\n    cycles: -1\n    flows: {Ar: 1 slm}\n",
			`load recipe "t.yaml": line 7 col 5: step 1 vent: cycles -1 must not be negative
load recipe "t.yaml": line 7 col 5: step 1 vent: "cycles" applies only to a purge step`},
		{"quantities out of range",
			"start_temperature: -300 C\nsteps:\n  - kind: cool\n    to: 25 C\n    rate: -5 C/min\n    duration: 0 min\n    until: 0 Torr\n    pressure: 0 Torr\n    backfill: 0 atm\n    max_rise: -1 mTorr/min\n  - kind: anneal\n    temperature: -274 C\n    duration: 5 min\n    flows: {H2: -5 sccm, Hz: 5 sccm}\n",
			`load recipe "t.yaml": line 6 col 20: start_temperature "-300 C" is at or below absolute zero
load recipe "t.yaml": line 10 col 11: rate "-5 C/min" must be greater than zero
load recipe "t.yaml": line 11 col 15: duration "0 min" must be greater than zero
load recipe "t.yaml": line 12 col 12: until "0 Torr" must be greater than zero
load recipe "t.yaml": line 13 col 15: pressure "0 Torr" must be greater than zero
load recipe "t.yaml": line 14 col 15: backfill "0 atm" must be greater than zero
load recipe "t.yaml": line 15 col 15: max_rise "-1 mTorr/min" must not be negative
load recipe "t.yaml": line 17 col 18: temperature "-274 C" is at or below absolute zero
load recipe "t.yaml": line 19 col 17: step 2 anneal: flow of H2 "-5 sccm" must not be negative
  hint: write 0 sccm or leave the gas out
load recipe "t.yaml": line 19 col 26: unknown gas "Hz": did you mean "H2"?; known gases: H2 (hydrogen), CH4 (methane), Ar (argon), N2 (nitrogen), He (helium), C2H4 (ethylene), C2H2 (acetylene), O2 (oxygen), air (dry air)`},
		{"substrate out of range",
			"substrate:\n  material: copper foil\n  thickness: 0 um\n  purity: 150 %\nsteps: []\n",
			`load recipe "t.yaml": line 1 col 1: the recipe has no steps
  hint: add at least a ramp, a grow and a cool step
load recipe "t.yaml": line 5 col 14: thickness "0 um" must be greater than zero
load recipe "t.yaml": line 6 col 11: purity "150 %" must be between 0 % and 100 %`},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			if got := loadError("recipe", recipeYAML(c.body)); got != c.want {
				t.Errorf("got:\n%s\nwant:\n%s", got, c.want)
			}
		})
	}
}

// TestDecodeShapes: values of the wrong YAML shape or kind, unknown,
// repeated and missing fields (the decoder).
func TestDecodeShapes(t *testing.T) {
	cases := []struct {
		name, body, want string
	}{
		{"cycles must be a whole number",
			"steps:\n  - kind: purge\n    cycles: 2.5\n",
			"load recipe \"t.yaml\": line 8 col 13: cycles \"2.5\" is not a whole number"},
		{"cycles must be a single value",
			"steps:\n  - kind: purge\n    cycles: [1]\n",
			"load recipe \"t.yaml\": line 8 col 13: cycles must be a single value (a whole number), not a list or mapping"},
		{"steps must be a list",
			"steps: 5\n",
			"load recipe \"t.yaml\": line 6 col 8: steps must be a list (lines starting with \"- \")"},
		{"kind must be a single value",
			"steps:\n  - kind: [grow]\n",
			"load recipe \"t.yaml\": line 7 col 11: kind must be a single value (a step kind such as \"grow\"), not a list or mapping"},
		{"unknown kind with a suggestion",
			"steps:\n  - kind: grwo\n",
			`load recipe "t.yaml": line 7 col 11: unknown step kind "grwo"
  hint: use one of: pump, leak-check, purge, ramp, anneal, grow, cool, vent; did you mean "grow"?`},
		{"unknown field with a suggestion",
			"steps:\n  - kind: vent\n    flow: {Ar: 1 slm}\n",
			`load recipe "t.yaml": line 8 col 5: unknown field "flow" in steps[1]
  hint: known fields: kind, name, duration, until, temperature, to, rate, pressure, flows, max_rise, cycles, backfill, pump_to, notes; did you mean "flows"?`},
		{"field given twice",
			"steps:\n  - kind: vent\n    kind: vent\n",
			"load recipe \"t.yaml\": line 8 col 5: field \"kind\" is given twice"},
		{"missing kind",
			"steps:\n  - name: x\n",
			`load recipe "t.yaml": line 7 col 5: missing required field "kind" in steps[1]
  hint: add a line "kind: …"`},
		{"step must be a mapping",
			"steps:\n  - vent\n",
			"load recipe \"t.yaml\": line 7 col 5: steps[1] must be a mapping of field: value lines"},
		{"flows must be a mapping",
			"steps:\n  - kind: vent\n    flows: 5\n",
			"load recipe \"t.yaml\": line 8 col 12: flows must be a mapping of gas: flow lines such as \"H2: 20 sccm\""},
		{"gas given twice and a flow that is a list",
			"steps:\n  - kind: vent\n    flows:\n      Ar: 1 slm\n      Ar: 2 slm\n      N2: [1]\n",
			`load recipe "t.yaml": line 10 col 7: gas "Ar" is given twice
load recipe "t.yaml": line 11 col 11: N2 must be a single value (a flow such as "20 sccm"), not a list or mapping`},
		{"flow in the wrong unit",
			"steps:\n  - kind: vent\n    flows: {Ar: 5 Torr}\n",
			"load recipe \"t.yaml\": line 8 col 17: flow \"5 Torr\" is a pressure, want a flow such as \"20 sccm\""},
		{"pressure neither a pressure nor pump",
			"steps:\n  - kind: vent\n    pressure: 5 sccm\n",
			`load recipe "t.yaml": line 8 col 15: pressure "5 sccm" is a flow, want a pressure such as "500 mTorr"
  hint: or write "pump" for a step open to the pump`},
		{"pressure must be a single value",
			"steps:\n  - kind: vent\n    pressure: {a: b}\n",
			"load recipe \"t.yaml\": line 8 col 15: pressure must be a single value (a pressure such as \"500 mTorr\", or \"pump\"), not a list or mapping"},
		{"quantity must be a single value",
			"steps:\n  - kind: grow\n    duration: [5 min]\n",
			"load recipe \"t.yaml\": line 8 col 15: duration must be a single value (a duration such as \"30 min\"), not a list or mapping"},
		{"text must be a single value",
			"description: [a]\nsteps: []\n",
			"load recipe \"t.yaml\": line 6 col 14: description must be a single value (text), not a list or mapping"},
		{"alias to a scalar and a null field",
			"steps:\n  - kind: &k grow\n    name:\n    temperature: 1000 C\n    duration: 5 min\n  - kind: *k\n    temperature: 1000 C\n    duration: 5 min\n",
			"no error"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			if got := loadError("recipe", recipeYAML(c.body)); got != c.want {
				t.Errorf("got:\n%s\nwant:\n%s", got, c.want)
			}
		})
	}
}

// TestFurnaceRules: the template furnace with one thing broken per case
// (validateFurnace).
func TestFurnaceRules(t *testing.T) {
	data, err := os.ReadFile("../templates/furnace.yaml")
	if err != nil {
		t.Fatal(err)
	}
	base := string(data)
	if got := loadError("furnace", base); got != "no error" {
		t.Fatalf("the template furnace must load: %s", got)
	}
	cases := []struct {
		name, furnace, want string
	}{
		{"tube shorter than its heated length",
			strings.NewReplacer("length: 1000 mm", "length: 100 mm").Replace(base),
			"load furnace \"t.yaml\": line 10 col 11: tube length \"100 mm\" is shorter than its heated length \"300 mm\""},
		{"two lines for one gas, unknown calibration gas",
			strings.NewReplacer("calibrated_for: N2", "calibrated_for: Nx", "- gas: N2", "- gas: H2").Replace(base),
			`load furnace "t.yaml": line 22 col 5: unknown gas "Nx": did you mean "N2"?; known gases: H2 (hydrogen), CH4 (methane), Ar (argon), N2 (nitrogen), He (helium), C2H4 (ethylene), C2H2 (acetylene), O2 (oxygen), air (dry air)
load furnace "t.yaml": line 25 col 5: two gas lines for H2; foilrun needs one line per gas
  hint: merge them or remove one`},
		{"no gas lines",
			strings.NewReplacer("gas_lines:\n  - gas: Ar\n    full_scale: 1 slm\n  - gas: H2\n    full_scale: 100 sccm\n  - gas: CH4\n    full_scale: 50 sccm\n    calibrated_for: N2         # factor taken from the gas table\n  - gas: N2\n    full_scale: 2 slm\n", "gas_lines: []\n").Replace(base),
			`load furnace "t.yaml": line 5 col 1: the furnace has no gas lines
  hint: add one line per gas: "- {gas: H2, full_scale: 100 sccm}"`},
		{"gauge range upside down",
			strings.NewReplacer("gauge_min: 0.5 mTorr", "gauge_min: 2000 mbar").Replace(base),
			"load furnace \"t.yaml\": line 34 col 14: gauge_max \"1100 mbar\" must be above gauge_min \"2000 mbar\""},
		{"log columns in the wrong units",
			strings.NewReplacer("unit: Torr}", "unit: sccm}", "unit: s}", "unit: C}", "MFC1_Ar, unit: sccm", "MFC1_Ar, unit: K").Replace(base),
			`load furnace "t.yaml": line 40 col 9: controller_log time: unit "C" is not a duration unit
  hint: use one of: s, min, h
load furnace "t.yaml": line 44 col 13: controller_log pressure: unit "sccm" is not a pressure unit
  hint: use one of: Pa, kPa, mbar, bar, Torr, mTorr, atm
load furnace "t.yaml": line 46 col 9: controller_log flows.Ar: unit "K" is not a flow unit
  hint: use one of: sccm, slm, mol/s`},
		{"log flow of an unknown gas",
			strings.NewReplacer("    Ar: {column", "    Arr: {column").Replace(base),
			"load furnace \"t.yaml\": line 46 col 10: unknown gas \"Arr\": did you mean \"Ar\"?; known gases: H2 (hydrogen), CH4 (methane), Ar (argon), N2 (nitrogen), He (helium), C2H4 (ethylene), C2H2 (acetylene), O2 (oxygen), air (dry air)"},
		{"log flows must be a mapping",
			strings.NewReplacer("  flows:\n    Ar: {column: MFC1_Ar, unit: sccm}\n    H2: {column: MFC2_H2, unit: sccm}\n    CH4: {column: MFC3_CH4, unit: sccm}", "  flows: 5\n  #").Replace(base),
			"load furnace \"t.yaml\": line 45 col 10: flows must be a mapping of name: value lines"},
		{"quantities out of range",
			strings.NewReplacer("inner_diameter: 22 mm", "inner_diameter: 0 mm", "max_ramp_up: 25 C/min", "max_ramp_up: -5 C/min", "thermocouple_margin: 10 K", "thermocouple_margin: -1 K", "full_scale: 100 sccm", "full_scale: 0 sccm", "pump_speed: 5.5 m3/h", "pump_speed: 0 m3/h", "dilution_flow: 20 slm", "dilution_flow: -1 slm", "line_length: 1.5 m", "line_length: 0 m", "service_limit: 1100 C", "service_limit: -300 C").Replace(base),
			`load furnace "t.yaml": line 8 col 19: inner_diameter "0 mm" must be greater than zero
load furnace "t.yaml": line 11 col 18: service_limit "-300 C" is at or below absolute zero
load furnace "t.yaml": line 14 col 16: max_ramp_up "-5 C/min" must be greater than zero
load furnace "t.yaml": line 16 col 24: thermocouple_margin "-1 K" must not be negative
load furnace "t.yaml": line 21 col 17: full_scale "0 sccm" must be greater than zero
load furnace "t.yaml": line 28 col 15: pump_speed "0 m3/h" must be greater than zero
load furnace "t.yaml": line 31 col 16: line_length "0 m" must be greater than zero
load furnace "t.yaml": line 36 col 18: dilution_flow "-1 slm" must not be negative`},
		{"unknown dilution gas",
			strings.NewReplacer("dilution_gas: N2", "dilution_gas: N3").Replace(base),
			"load furnace \"t.yaml\": line 36 col 3: unknown gas \"N3\": did you mean \"N2\"?; known gases: H2 (hydrogen), CH4 (methane), Ar (argon), N2 (nitrogen), He (helium), C2H4 (ethylene), C2H2 (acetylene), O2 (oxygen), air (dry air)"},
		{"low end and correction factor",
			strings.NewReplacer("    full_scale: 2 slm\n", "    full_scale: 2 slm\n    low_end: 150 %\n    correction_factor: 0\n").Replace(base),
			`load furnace "t.yaml": line 27 col 14: low_end "150 %" must be between 0 % and 100 %
load furnace "t.yaml": line 28 col 24: correction_factor "0" must be greater than zero`},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			if got := loadError("furnace", c.furnace); got != c.want {
				t.Errorf("got:\n%s\nwant:\n%s", got, c.want)
			}
		})
	}
}
