package recipe

import (
	"bytes"
	"errors"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gopkg.in/yaml.v3"

	"github.com/foilrun/foilrun/recipe/gas"
)

// Values written by the edits, in SI, with their sources:
//   - kelvin from degrees Celsius: T/K = t/°C + 273.15 (SI definition of
//     the Celsius scale), so 1035 °C = 1308.15 K;
//   - 1 min = 60 s;
//   - 1 sccm = gas.MolPerSCCMPerSecond mol/s (1 cm³/min of ideal gas at
//     0 °C and 101325 Pa, the MFC makers' convention);
//   - 1 Torr = 101325/760 Pa (definition of the torr).
const (
	k1035C = 1308.15
	paTorr = 101325.0 / 760
)

func sccm(v float64) float64 { return v * gas.MolPerSCCMPerSecond }

// readBack returns the edited field of step i of a parsed recipe, in SI.
func readBack(t *testing.T, r *Recipe, i int, e StepEdit) float64 {
	t.Helper()
	st := r.Steps[i]
	switch e.Field {
	case EditTemperature:
		return st.Temperature.SI
	case EditDuration:
		return st.Duration.SI
	case EditPressure:
		return st.Pressure.Setpoint.SI
	case EditFlow:
		g, err := gas.Lookup(e.Gas)
		if err != nil {
			t.Fatal(err)
		}
		return st.Flows.Of(g.Symbol)
	}
	t.Fatalf("unknown field %q", e.Field)
	return 0
}

// TestEditRecipe edits each testdata/recipes/edit/<case>/recipe.yaml and
// compares the result with want.yaml beside it (go test ./recipe -run
// TestEditRecipe -update rewrites them). The result must keep every
// comment, parse with ParseRecipe, and read back each changed field to its
// SI value within the rounding of the digits written (tol, SI), and the
// steps named in follow must read back the new temperature.
func TestEditRecipe(t *testing.T) {
	const dir = "../testdata/recipes/edit"
	cases := []struct {
		name    string
		step    int
		edits   []StepEdit
		tol     []float64
		to      string // Edit.To, relative to the case folder
		follow  []int  // steps whose temperature must follow
		stay    []int  // steps whose temperature must not
		written []string
	}{
		{"grow-temperature", 5, []StepEdit{
			{Field: EditTemperature, SI: k1035C + 0.004, Digits: 5}, // 1035.004 C → "1035 C"
			{Field: EditDuration, SI: 720, Digits: 4},
			{Field: EditFlow, Gas: "CH4", SI: sccm(25), Digits: 3},
		}, []float64{0.005, 0, 1e-9 * sccm(25)}, "", []int{3, 4}, []int{6}, []string{"to: 1035 C", "temperature: 1035 C", "duration: 12 min", "CH4: 25 sccm"}},
		{"units-kept", 5, []StepEdit{
			{Field: EditTemperature, SI: k1035C},
			{Field: EditDuration, SI: 750, Digits: 3},
			{Field: EditFlow, Gas: "CH4", SI: sccm(25), Digits: 3},
			{Field: EditPressure, SI: 2 * paTorr, Digits: 4}, // 2.66645 mbar → "2.666 mbar"
		}, []float64{1e-9, 0, 1e-9 * sccm(25), 0.0005 * 100}, "", []int{3, 4}, []int{6},
			[]string{"to: 1308.15 K", "temperature: 1308.15 K", "duration: 750 s", "CH4: 0.025 slm", "pressure: 2.666 mbar"}},
		{"new-fields", 6, []StepEdit{
			{Field: EditTemperature, SI: k1035C, Digits: 5},
			{Field: EditPressure, SI: 2 * paTorr, Digits: 3},
			{Field: EditFlow, Gas: "argon", SI: sccm(100), Digits: 3},
		}, []float64{1e-9, 1e-9, 1e-9 * sccm(100)}, "", []int{5}, []int{3, 4}, []string{"to: 1035 C", "pressure: 2 Torr", "Ar: 100 sccm"}},
		{"alias-key", 5, []StepEdit{
			{Field: EditFlow, Gas: "CH4", SI: sccm(12.5), Digits: 3},
			{Field: EditFlow, Gas: "H2", SI: sccm(40), Digits: 3},
		}, []float64{1e-9 * sccm(12.5), 1e-9 * sccm(40)}, "", nil, nil, []string{"methane: 12.5 sccm", "hydrogen: 40 sccm"}},
		{"relocate", 5, []StepEdit{
			{Field: EditDuration, SI: 90, Digits: 4},
		}, []float64{0}, "out/suggested.yaml", nil, nil, []string{"duration: 1.5 min", "furnace: ../furnace.yaml", "site: ../site.yaml"}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			from := filepath.Join(dir, c.name, "recipe.yaml")
			in, err := os.ReadFile(from)
			if err != nil {
				t.Fatal(err)
			}
			e := Edit{Step: c.step, Changes: c.edits, From: from}
			if c.to != "" {
				e.To = filepath.Join(dir, c.name, c.to)
			}
			got, err := EditRecipe(in, e)
			if err != nil {
				t.Fatal(err)
			}
			golden := filepath.Join(dir, c.name, "want.yaml")
			if *update {
				if err := os.WriteFile(golden, got, 0o644); err != nil {
					t.Fatal(err)
				}
			}
			want, err := os.ReadFile(golden)
			if err != nil {
				t.Fatalf("%v (run go test ./recipe -run TestEditRecipe -update to create it)", err)
			}
			if !bytes.Equal(got, want) {
				t.Errorf("got\n%s\nwant (%s)\n%s", got, golden, want)
			}
			for _, line := range strings.Split(string(in), "\n") {
				if i := strings.Index(line, "#"); i >= 0 && !bytes.Contains(got, []byte(strings.TrimSpace(line[i:]))) {
					t.Errorf("comment %q lost", strings.TrimSpace(line[i:]))
				}
			}
			for _, w := range c.written {
				if !bytes.Contains(got, []byte(w)) {
					t.Errorf("result lacks %q", w)
				}
			}
			r, err := ParseRecipe(golden, got)
			if err != nil {
				t.Fatalf("result does not parse: %v", err)
			}
			orig, err := ParseRecipe(from, in)
			if err != nil {
				t.Fatal(err)
			}
			for i, ed := range c.edits {
				if v := readBack(t, r, c.step, ed); math.Abs(v-ed.SI) > c.tol[i] {
					t.Errorf("%s %s: read back %.10g, want %.10g ± %g", ed.Field, ed.Gas, v, ed.SI, c.tol[i])
				}
			}
			newT := r.Steps[c.step].Temperature.SI
			for _, i := range c.follow {
				if got := r.Steps[i].Temperature.SI + r.Steps[i].To.SI; math.Abs(got-newT) > 0.01 {
					t.Errorf("step %d temperature %.2f K, want it to follow the new %.2f K", i+1, got, newT)
				}
			}
			for _, i := range c.stay {
				if g, w := r.Steps[i].Temperature.SI+r.Steps[i].To.SI, orig.Steps[i].Temperature.SI+orig.Steps[i].To.SI; g != w {
					t.Errorf("step %d temperature %.2f K, want it to stay at %.2f K", i+1, g, w)
				}
			}
		})
	}
}

func TestEditRecipeErrors(t *testing.T) {
	in, err := os.ReadFile("../testdata/recipes/edit/grow-temperature/recipe.yaml")
	if err != nil {
		t.Fatal(err)
	}
	cases := []struct {
		name string
		data []byte
		step int
		edit StepEdit
		text string // part of the message
	}{
		{"step out of range", in, 12, StepEdit{Field: EditDuration, SI: 60}, "cannot find step 13"},
		{"negative step", in, -1, StepEdit{Field: EditDuration, SI: 60}, "cannot find step 0"},
		{"unknown field", in, 5, StepEdit{Field: "time", SI: 60}, `field "time": want one of temperature, duration, pressure, flow`},
		{"unknown gas", in, 5, StepEdit{Field: EditFlow, Gas: "XeF2", SI: sccm(5)}, `flow of "XeF2"`},
		{"not finite", in, 5, StepEdit{Field: EditTemperature, SI: math.Inf(1)}, "not a finite value"},
		{"negative digits", in, 5, StepEdit{Field: EditDuration, SI: 60, Digits: -2}, "-2 significant digits"},
		{"not a mapping", []byte("- a\n- b\n"), 0, StepEdit{Field: EditDuration, SI: 60}, "not a YAML mapping"},
		{"no steps", []byte("name: x\n"), 0, StepEdit{Field: EditDuration, SI: 60}, "cannot find step 1"},
		{"flows not a mapping", []byte("steps:\n  - kind: grow\n    flows: [H2]\n"), 0, StepEdit{Field: EditFlow, Gas: "H2", SI: sccm(5)}, "flows at line 3 col 12 is not a mapping"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			_, err := EditRecipe(c.data, Edit{Step: c.step, Changes: []StepEdit{c.edit}, From: "r.yaml"})
			if !errors.Is(err, ErrEdit) || !strings.Contains(err.Error(), c.text) || !strings.Contains(err.Error(), `edit recipe "r.yaml"`) {
				t.Errorf("got %v, want ErrEdit naming the file and containing %q", err, c.text)
			}
		})
	}
	if _, err := EditRecipe([]byte("a: [\n"), Edit{From: "r.yaml"}); err == nil || !strings.Contains(err.Error(), `edit recipe "r.yaml"`) {
		t.Errorf("bad YAML: got %v, want an error naming the file", err)
	}
}

// FuzzEditRecipe: EditRecipe never panics; when it succeeds on input that
// decodes as YAML the result does too, and when the input is a valid recipe and the edit a valid value
// on its first grow step, the result parses with ParseRecipe and reads the
// value back (within the rounding of the digits written).
func FuzzEditRecipe(f *testing.F) {
	for _, c := range []string{"grow-temperature", "units-kept", "new-fields", "alias-key"} {
		data, err := os.ReadFile("../testdata/recipes/edit/" + c + "/recipe.yaml")
		if err != nil {
			f.Fatal(err)
		}
		f.Add(data, uint8(0), uint8(3), 0.5)
		f.Add(data, uint8(3), uint8(0), 0.1)
	}
	f.Add([]byte("steps:\n  - &a {kind: grow, temperature: 1000 C}\n  - *a\n"), uint8(0), uint8(5), 0.2)
	f.Add([]byte("steps: [{kind: grow, flows: &f {H2: 20 sccm}}, {kind: cool, flows: *f}]\n"), uint8(2), uint8(2), 0.9)
	f.Fuzz(func(t *testing.T, data []byte, field, digits uint8, x float64) {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			x = 0.5
		}
		x = math.Abs(x) - math.Floor(math.Abs(x)) // in [0, 1)
		edits := []StepEdit{
			{Field: EditTemperature, SI: 1173.15 + 150*x},
			{Field: EditDuration, SI: 30 + 3000*x},
			{Field: EditPressure, SI: 10 + 1000*x},
			{Field: EditFlow, Gas: "CH4", SI: sccm(1 + 40*x)},
		}
		e := edits[int(field)%len(edits)]
		e.Digits = int(digits % 8)
		step := 0
		r, perr := ParseRecipe("in.yaml", data)
		if perr == nil {
			if step = r.FirstStep(KindGrow); step < 0 {
				step = 0
			}
		}
		out, err := EditRecipe(data, Edit{Step: step, Changes: []StepEdit{e}, From: "in.yaml"})
		if err != nil {
			return
		}
		var anything any
		if yaml.Unmarshal(data, &anything) == nil {
			if err := yaml.Unmarshal(out, &anything); err != nil {
				t.Fatalf("input decodes as YAML, result does not: %v\n%s", err, out)
			}
		}
		if perr != nil || r.FirstStep(KindGrow) < 0 {
			return
		}
		r2, err := ParseRecipe("out.yaml", out)
		if err != nil {
			t.Fatalf("valid recipe, valid edit: result does not parse: %v\ninput:\n%s\noutput:\n%s", err, data, out)
		}
		got := readBack(t, r2, step, e)
		tol := 1e-9 * e.SI
		if e.Digits > 0 {
			tol = math.Max(tol, 2*math.Pow(10, float64(1-e.Digits))*e.SI)
		}
		if math.Abs(got-e.SI) > tol {
			t.Fatalf("%s: read back %g, want %g ± %g\n%s", e.Field, got, e.SI, tol, out)
		}
	})
}

// EditSteps: a growth temperature moves the ramp and anneal before it,
// unless an edit of the anneal sets its own, which then leads the ramp;
// a ramp's rate and a grow pressure are written in the file's units or
// the defaults. Values are exact by construction (Kelvin of whole °C).
func TestEditSteps(t *testing.T) {
	data, err := os.ReadFile("../templates/recipe-lowpressure.yaml")
	if err != nil {
		t.Fatal(err)
	}
	r, err := ParseRecipe("t.yaml", data)
	if err != nil {
		t.Fatal(err)
	}
	grow, anneal, ramp := r.FirstStep(KindGrow), r.FirstStep(KindAnneal), r.FirstStep(KindRamp)
	tests := []struct {
		name                                       string
		edits                                      []Edit
		wantGrow, wantAnneal, wantRampTo, wantRate float64 // K, K, K, K/s
	}{
		{"grow alone moves anneal and ramp", []Edit{{Step: grow, Changes: []StepEdit{{Field: EditTemperature, SI: Kelvin(1040)}}}},
			Kelvin(1040), Kelvin(1040), Kelvin(1040), 20.0 / 60},
		{"anneal set too leads the ramp", []Edit{
			{Step: anneal, Changes: []StepEdit{{Field: EditTemperature, SI: Kelvin(990)}}},
			{Step: grow, Changes: []StepEdit{{Field: EditTemperature, SI: Kelvin(1040)}}}},
			Kelvin(1040), Kelvin(990), Kelvin(990), 20.0 / 60},
		{"ramp rate and to", []Edit{{Step: ramp, Changes: []StepEdit{{Field: EditRate, SI: 0.25}, {Field: EditTo, SI: Kelvin(1000)}}}},
			Kelvin(1000), Kelvin(1000), Kelvin(1000), 0.25},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			out, err := EditSteps(data, "t.yaml", "", tt.edits)
			if err != nil {
				t.Fatal(err)
			}
			got, err := ParseRecipe("t.yaml", out)
			if err != nil {
				t.Fatalf("%v\n%s", err, out)
			}
			for _, c := range []struct {
				what      string
				got, want float64
			}{
				{"grow temperature", got.Steps[grow].Temperature.SI, tt.wantGrow},
				{"anneal temperature", got.Steps[anneal].Temperature.SI, tt.wantAnneal},
				{"ramp to", got.Steps[ramp].To.SI, tt.wantRampTo},
				{"ramp rate", got.Steps[ramp].Rate.SI, tt.wantRate},
			} {
				if math.Abs(c.got-c.want) > 1e-9 {
					t.Errorf("%s: got %.9g, want %.9g", c.what, c.got, c.want)
				}
			}
		})
	}
}
