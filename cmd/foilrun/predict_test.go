package main

import (
	"encoding/json"
	"image/png"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

const lowPressure = "../../templates/recipe-lowpressure.yaml"

// The JSON of `predict` on the low-pressure template, pinned. The numbers
// are the kinetics package's (checked there against the Avrami solution,
// N∞ and a scipy reference); this pins the command's form and units.
func TestPredictJSONGolden(t *testing.T) {
	t.Parallel()
	code, out, errOut := runCLI(t, "predict", lowPressure, "--output", "json")
	if code != exitOK || errOut != "" {
		t.Fatalf("exit %d, stderr %q", code, errOut)
	}
	golden(t, "predict/lowpressure.json", out)
	var r predictResult
	if err := json.Unmarshal([]byte(out), &r); err != nil {
		t.Fatal(err)
	}
	// Common practice for low-pressure growth near 1000 °C: full coverage
	// within the 15 min step, domains of µm to tens of µm.
	if r.Coverage < 0.99 || r.T99Min == nil || *r.T99Min > 15 || r.DomainUm < 1 || r.DomainUm > 50 {
		t.Errorf("got coverage %g, t99 %v min, domain %g um", r.Coverage, r.T99Min, r.DomainUm)
	}
}

func TestPredictTable(t *testing.T) {
	t.Parallel()
	code, out, _ := runCLI(t, "predict", lowPressure)
	if code != exitOK {
		t.Fatalf("exit %d", code)
	}
	for _, want := range []string{"parameters: illustrative defaults, not a calibration", "nuclei density per mm2", "6 grow (growth)", "t99 min"} {
		if !strings.Contains(out, want) {
			t.Errorf("table output lacks %q:\n%s", want, out)
		}
	}
	code, out, _ = runCLI(t, "predict", lowPressure, "--output", "csv")
	if first := strings.SplitN(out, "\n", 2)[0]; code != exitOK || first != "step,T C,CH4 Pa,H2 Pa,nucleation /mm2/s,growth um/min,coverage %,nuclei /mm2,domain um" {
		t.Errorf("csv: exit %d, header %q", code, first)
	}
}

// The plot is a PNG that decodes to the size the canvas asks for: 26 cm ×
// 22.8 cm (4 rows of 5 cm under a 2.8 cm header) at 120 dpi is
// 1228 × 1077 pixels (26 / 2.54 × 120 = 1228.3, 22.8 / 2.54 × 120 = 1077.2).
func TestPredictPlotPNG(t *testing.T) {
	t.Parallel()
	path := filepath.Join(t.TempDir(), "profile.png")
	code, _, errOut := runCLI(t, "predict", lowPressure, "--plot", path, "--output", "json")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	img, err := png.Decode(f)
	if err != nil {
		t.Fatalf("plot does not decode as PNG: %v", err)
	}
	if b := img.Bounds(); b.Dx() != 1228 || b.Dy() != 1077 {
		t.Errorf("got %d×%d pixels, want 1228×1077", b.Dx(), b.Dy())
	}
	if fi, _ := os.Stat(path); fi.Size() < 10000 {
		t.Errorf("got a %d-byte PNG, want a drawn plot (> 10 kB)", fi.Size())
	}
}

func TestPredictPlotSVG(t *testing.T) {
	t.Parallel()
	path := filepath.Join(t.TempDir(), "profile.svg")
	if code, _, errOut := runCLI(t, "predict", lowPressure, "--plot", path); code != exitOK {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	data, err := os.ReadFile(path)
	if err != nil || !strings.Contains(string(data), "<svg") {
		t.Errorf("not an SVG file (%v)", err)
	}
}

// Bad input: exit 2 with an exact message.
func TestPredictBadInput(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	bad := filepath.Join(dir, "p.yaml")
	if err := os.WriteFile(bad, []byte("nucleation_energy: 1 eV\nspeed: 3\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		name string
		args []string
		want string
	}{
		{"plot extension", []string{"predict", lowPressure, "--plot", "a.pdf"}, `foilrun: --plot "a.pdf": want a file ending in .png or .svg` + "\n"},
		{"output", []string{"predict", lowPressure, "--output", "xml"}, `foilrun: --output "xml": want table, csv or json` + "\n"},
		{"params unknown field", []string{"predict", lowPressure, "--params", bad}, `foilrun: load params "` + bad + `": line 2 col 1: unknown field "speed" in the params file`},
	} {
		code, out, errOut := runCLI(t, c.args...)
		if code != exitUsage || out != "" || !strings.HasPrefix(errOut, c.want) {
			t.Errorf("%s: got exit %d, stderr %q; want exit 2, stderr starting %q", c.name, code, errOut, c.want)
		}
	}
}

func TestWindowTable(t *testing.T) {
	t.Parallel()
	code, out, errOut := runCLI(t, "window", lowPressure, "--vary", "temperature=960C:1080C:3", "--vary", "CH4=5sccm:35sccm:2", "--show", "nuclei_density")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	// Not a terminal: no progress bar, nothing on stderr.
	if errOut != "" {
		t.Errorf("got stderr %q, want none in a pipe", errOut)
	}
	// 1080 C plus the 10 K thermocouple margin reaches copper's melting
	// point 1084.62 C (ITS-90): that column is infeasible.
	for _, want := range []string{"CH4 flow (sccm) \\ temperature (C)", "│    x │", "x: infeasible, temperature.copper-melting"} {
		if !strings.Contains(out, want) {
			t.Errorf("window table lacks %q:\n%s", want, out)
		}
	}
}

func TestWindowJSONAndPlot(t *testing.T) {
	t.Parallel()
	path := filepath.Join(t.TempDir(), "map.png")
	code, out, errOut := runCLI(t, "window", lowPressure, "--vary", "duration=1min:5min:3", "--vary", "pressure=20Pa:200Pa:2", "--output", "json", "--plot", path, "--show", "time_to_99")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	var r windowResult
	if err := json.Unmarshal([]byte(out), &r); err != nil {
		t.Fatal(err)
	}
	if len(r.Points) != 6 || r.X != "duration" || r.XUnit != "min" || r.Y != "pressure" || r.Points[0].X != 1 || r.Points[5].Y != 200 {
		t.Errorf("got %d points, axes %s %s / %s %s, first x %g last y %g", len(r.Points), r.X, r.XUnit, r.Y, r.YUnit, r.Points[0].X, r.Points[5].Y)
	}
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	if _, err := png.Decode(f); err != nil {
		t.Errorf("heat map does not decode: %v", err)
	}
}

func TestWindowBadInput(t *testing.T) {
	t.Parallel()
	hint := "  hint: write --vary PARAM=FROM:TO:STEPS with PARAM temperature, pressure, duration or a gas, e.g. --vary temperature=950C:1050C:11\n"
	for _, c := range []struct {
		name string
		args []string
		want string
	}{
		{"unknown parameter", []string{"--vary", "tempreature=950C:1050C:11", "--vary", "CH4=5sccm:35sccm:3"},
			`foilrun: axis "tempreature=950C:1050C:11": unknown parameter "tempreature", want temperature, duration, pressure or a gas such as CH4` + "\n" + hint},
		{"zero steps", []string{"--vary", "temperature=950C:1050C:0", "--vary", "CH4=5sccm:35sccm:3"},
			`foilrun: axis "temperature=950C:1050C:0": want 2 to 10000 steps, got 0` + "\n" + hint},
		{"outside limits", []string{"--vary", "temperature=950C:1150C:5", "--vary", "CH4=5sccm:35sccm:3"},
			`foilrun: axis "temperature=950C:1150C:5": 1150 C is above the tube's service limit 1100 C on furnace "tube-1"` + "\n"},
		{"one axis", []string{"--vary", "temperature=950C:1050C:5"}, "foilrun: want exactly two --vary PARAM=FROM:TO:STEPS, got 1\n"},
		{"show", []string{"--vary", "temperature=950C:1050C:5", "--vary", "CH4=5sccm:35sccm:3", "--show", "speed"},
			`foilrun: --show "speed": want coverage, nuclei_density, domain_size, time_to_99` + "\n"},
	} {
		code, out, errOut := runCLI(t, append([]string{"window", lowPressure}, c.args...)...)
		if code != exitUsage || out != "" || errOut != c.want {
			t.Errorf("%s: got exit %d, stderr\n%q\nwant exit 2, stderr\n%q", c.name, code, errOut, c.want)
		}
	}
}

// On a terminal the window draws a progress bar on stderr, and only there.
func TestWindowProgressOnTerminal(t *testing.T) {
	t.Parallel()
	var out, errb strings.Builder
	code := run([]string{"window", lowPressure, "--vary", "temperature=960C:1040C:3", "--vary", "CH4=5sccm:35sccm:2", "--output", "csv"},
		&streams{In: strings.NewReader(""), Out: &out, Err: &errb, ErrTTY: true})
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errb.String())
	}
	if errb.Len() == 0 {
		t.Errorf("got no progress output on a terminal stderr")
	}
	if strings.Contains(out.String(), "window") || strings.Count(out.String(), "\n") != 7 {
		t.Errorf("stdout should hold only the CSV (header and 6 rows), got %q", out.String())
	}
}
