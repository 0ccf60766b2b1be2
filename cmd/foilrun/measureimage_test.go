package main

import (
	"encoding/json"
	"fmt"
	"image"
	"image/png"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/foilrun/foilrun/kinetics/micrograph/synth"
)

// fieldImage writes a 400×400 PNG of hexagons (circumradius 10 px)
// scattered for an expected coverage target (n = −ln(1 − target)·A/a,
// Kolmogorov–Johnson–Mehl–Avrami for random placement), darker domains
// (graphene 90, copper 150), optionally with a 40-row black info bar with
// white marks below it, and returns the drawn geometry's coverage. A
// target of 1 draws one domain over the whole field.
func fieldImage(t *testing.T, path string, target float64, bar bool, seed uint64) float64 {
	t.Helper()
	const w, h, r = 400, 400, 10.0
	rng := rand.New(rand.NewPCG(seed, 0xf1e1d))
	ds := []synth.Hexagon{{X: w / 2, Y: h / 2, R: 2 * w}}
	if target < 1 {
		n := int(math.Round(-math.Log(1-target) * w * h / (1.5 * math.Sqrt(3) * r * r)))
		ds = synth.Scatter(w, h, n, r, rng)
	}
	s := synth.Scene{Width: w, Height: h, Domains: ds, Copper: 150, Graphene: 90, Light: synth.Gradient{X: 0.1}, Texture: synth.Grain(w, h, 0.02, rng), Noise: 3}
	img, cov := s.Gray8(rng)
	if bar {
		img = synth.WithInfoBar(img, synth.InfoBar{Height: 40, Background: 0, Ink: 255})
	}
	writePNG(t, path, img)
	return cov
}

func writePNG(t *testing.T, path string, img image.Image) {
	t.Helper()
	fh, err := os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	defer fh.Close()
	if err := png.Encode(fh, img); err != nil {
		t.Fatal(err)
	}
}

// imagingSite is a site file with one SEM preset: darker domains, 0.2 µm
// pixels, bare copper at gray 150 (the level fieldImage draws).
const imagingSite = `name: test room
exhaust_to: house exhaust duct
gas_code: the site's gas-safety rules, revision 1
room:
  volume: 60 m3
  air_changes: 6 /h
imaging:
  - {name: sem-1, polarity: darker, pixel: 0.2um, bare_gray: 150}
  - {name: optical-1, polarity: brighter, pixel: 1um}
`

// inFieldDir makes a temporary working folder holding a.png (5 %), b.png
// (50 %), c.png (80 %), barred.png (10 % with an info bar), full.png (one
// domain over the field) and site.yaml, and returns the true coverages.
func inFieldDir(t *testing.T) map[string]float64 {
	t.Helper()
	dir := t.TempDir()
	t.Chdir(dir)
	truth := map[string]float64{}
	for i, c := range []struct {
		name   string
		target float64
		bar    bool
	}{{"a.png", 0.05, false}, {"b.png", 0.5, false}, {"c.png", 0.8, false}, {"barred.png", 0.1, true}, {"full.png", 1, false}} {
		truth[c.name] = fieldImage(t, c.name, c.target, c.bar, uint64(i+1))
	}
	if err := os.WriteFile("site.yaml", []byte(imagingSite), 0o644); err != nil {
		t.Fatal(err)
	}
	return truth
}

// TestMeasureImageBadGolden: bad micrograph inputs exit 2 with the
// messages pinned under testdata/measure/bad/<case>/stderr.txt.
func TestMeasureImageBadGolden(t *testing.T) {
	goldens, err := filepath.Abs(filepath.Join("..", "..", "testdata", "measure", "bad"))
	if err != nil {
		t.Fatal(err)
	}
	inFieldDir(t)
	cases := []struct {
		name string
		args []string
	}{
		{"crop-outside", []string{"measure", "image", "a.png", "--pixel", "0.2um", "--crop", "300,300,500,380"}},
		{"crop-zero-area", []string{"measure", "image", "a.png", "--pixel", "0.2um", "--crop", "10,10,10,50"}},
		{"unknown-instrument", []string{"measure", "image", "a.png", "--instrument", "tem-2", "--site", "site.yaml"}},
		{"pixel-sizes-differ", []string{"--db=log.db", "outcome", "measure", "G26-0001", "--image", "a.png", "--image", "b.png", "--pixel", "0.2um", "--pixel", "0.5um"}},
		{"instrument-without-site", []string{"measure", "image", "a.png", "--instrument", "sem-1"}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			code, out, e := runCLI(t, c.args...)
			if code != 2 || out != "" {
				t.Errorf("exit %d, stdout %q; want 2 and nothing", code, out)
			}
			goldenAt(t, filepath.Join(goldens, c.name, "stderr.txt"), e)
		})
	}
}

// TestMeasureImageInfoBar: the bar under barred.png is found and cut, the
// output says so, and the coverage is within 0.015 of the drawn geometry
// (the tolerance); with auto polarity measure image warns on
// stderr that the polarity is a guess.
func TestMeasureImageInfoBar(t *testing.T) {
	truth := inFieldDir(t)
	code, out, e := runCLI(t, "measure", "image", "barred.png", "--instrument", "sem-1", "--site", "site.yaml", "--output", "json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, e)
	}
	var res imageResult
	if err := json.Unmarshal([]byte(out), &res); err != nil {
		t.Fatal(err)
	}
	if math.Abs(res.Coverage-truth["barred.png"]) > 0.015 || res.Region != [4]int{0, 0, 400, 400} || len(res.Cuts) != 1 {
		t.Errorf("got coverage %.4f, region %v, cuts %q; want %.4f ± 0.015, [0 0 400 400], one cut", res.Coverage, res.Region, res.Cuts, truth["barred.png"])
	}
	if res.PolaritySource != sourceInstrument || res.PixelUm != 0.2 {
		t.Errorf("polarity_source %q, pixel %g um; want instrument and 0.2", res.PolaritySource, res.PixelUm)
	}
	code, out, e = runCLI(t, "measure", "image", "barred.png", "--pixel", "0.2um")
	if code != 0 || !strings.Contains(e, "warning: barred.png: the polarity is a guess") || !strings.Contains(out, "cut: cut an info bar of 40 rows at the bottom (y 400–440)") {
		t.Errorf("auto polarity: exit %d, stderr %q, stdout %q; want 0, a warning and the cut", code, e, out)
	}
}

// storedOutcomes returns the outcomes run show lists for a run.
func storedOutcomes(t *testing.T, db, run string) []struct {
	Metric string
	Value  float64
	Method string
} {
	t.Helper()
	code, out, e := runCLI(t, db, "run", "show", run, "--output", "json")
	if code != 0 {
		t.Fatalf("run show: exit %d: %s", code, e)
	}
	var rec struct {
		Outcomes []struct {
			Metric string
			Value  float64
			Method string
		}
	}
	if err := json.Unmarshal([]byte(out), &rec); err != nil {
		t.Fatal(err)
	}
	return rec.Outcomes
}

// TestOutcomeMeasureProvenance: outcome measure refuses an unknown
// polarity and stores nothing; with a preset it stores polarity_source
// instrument; a one-peaked field is stored as coverage 1 by "continuous
// film" when the preset knows bare copper's gray and refused without it;
// at 80 % coverage the islands are stored as island_density; two fields
// are stored with their mean.
func TestOutcomeMeasureProvenance(t *testing.T) {
	tmpl, err := filepath.Abs(tmplDir + "recipe-lowpressure.yaml")
	if err != nil {
		t.Fatal(err)
	}
	truth := inFieldDir(t)
	db := "--db=log.db"
	code, out, e := runCLI(t, db, "run", "add", tmpl)
	if code != 0 {
		t.Fatalf("run add: exit %d: %s", code, e)
	}
	run := strings.TrimSpace(out[strings.LastIndex(strings.TrimSpace(out), "\n")+1:])
	half := logRecipe(t, db, filepath.Dir(tmpl), "1.1 min")
	code, _, e = runCLI(t, db, "outcome", "measure", half, "--image", "b.png", "--pixel", "0.2um")
	if code != 2 || !strings.Contains(e, "polarity of the domains is not known") || !strings.Contains(e, "--instrument") {
		t.Errorf("no polarity: exit %d, stderr %q; want 2 and a hint naming --polarity and --instrument", code, e)
	}
	if got := storedOutcomes(t, db, half); len(got) != 0 {
		t.Fatalf("refused measurement stored %d outcomes: %+v", len(got), got)
	}
	if code, _, e := runCLI(t, db, "outcome", "measure", run, "--image", "full.png", "--pixel", "0.2um", "--polarity", "darker"); code != 2 || !strings.Contains(e, "one peak") {
		t.Errorf("one-peaked field without bare gray: exit %d, stderr %q; want 2 and the one-peak refusal", code, e)
	}
	for _, img := range []string{"full.png", "c.png", "a.png", "b.png"} {
		if code, _, e := runCLI(t, db, "outcome", "measure", run, "--image", img, "--instrument", "sem-1", "--site", "site.yaml"); code != 0 {
			t.Fatalf("%s with a preset: exit %d: %s", img, code, e)
		}
	}
	if code, _, e := runCLI(t, db, "outcome", "measure", run, "--image", "a.png", "--image", "b.png", "--instrument", "sem-1", "--site", "site.yaml"); code != 0 {
		t.Fatalf("two fields: exit %d: %s", code, e)
	}
	got := storedOutcomes(t, db, run)
	var lines []string
	for _, o := range got {
		lines = append(lines, fmt.Sprintf("%s %.4f %s", o.Metric, o.Value, o.Method))
	}
	all := strings.Join(lines, "\n")
	for _, want := range []string{
		"coverage 1.0000 micrograph: continuous film",
		"island_density ",
		"polarity_source instrument; instrument sem-1",
		"; field 2 of 2 (b.png)",
		"coverage " + fmt.Sprintf("%.4f", meanOf(got, "coverage", "mean of 2")) + " mean of 2 fields of view",
	} {
		if !strings.Contains(all, want) {
			t.Errorf("stored outcomes lack %q:\n%s", want, all)
		}
	}
	// The mean of the two fields is their average, each within 0.015 of
	// its drawn geometry (issue tolerance), so the mean is within 0.015 of
	// the average truth.
	if m, want := meanOf(got, "coverage", "mean of 2"), (truth["a.png"]+truth["b.png"])/2; math.Abs(m-want) > 0.015 {
		t.Errorf("mean coverage of a.png and b.png: got %.4f, want %.4f ± 0.015", m, want)
	}
	// a.png (5 %) stores nuclei_density alone, as a field and as the
	// field mean; b.png (50 %) and c.png (80 %) are above the 30 % island
	// limit: b.png alone, as field 2 and the island mean (c.png's islands
	// have merged into ones that touch the right or bottom border, which
	// the counting frame does not count, and full.png has none).
	count := map[string]int{}
	for _, o := range got {
		count[o.Metric]++
	}
	if count["nuclei_density"] != 3 || count["island_density"] != 3 {
		t.Errorf("stored nuclei_density %d times and island_density %d times, want 3 and 3:\n%s", count["nuclei_density"], count["island_density"], all)
	}
}

// meanOf returns the value of the stored metric whose method starts with
// prefix, NaN when there is none.
func meanOf(os []struct {
	Metric string
	Value  float64
	Method string
}, metric, prefix string) float64 {
	for _, o := range os {
		if o.Metric == metric && strings.HasPrefix(o.Method, prefix) {
			return o.Value
		}
	}
	return math.NaN()
}

// logRecipe writes the low-pressure template with its grow step lasting
// duration into the working folder (beside furnace.yaml, and the
// site.yaml of inFieldDir, which its "site:" names), logs a run of it and
// returns the run's code.
func logRecipe(t *testing.T, db, tmpl, duration string) string {
	t.Helper()
	data, err := os.ReadFile(filepath.Join(tmpl, "recipe-lowpressure.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	furnace, err := os.ReadFile(filepath.Join(tmpl, "furnace.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	writeFile(t, "furnace.yaml", string(furnace))
	name := "grow-" + strings.ReplaceAll(duration, " ", "") + ".yaml"
	writeFile(t, name, strings.Replace(string(data), "duration: 15 min", "duration: "+duration, 1))
	code, out, e := runCLI(t, db, "run", "add", name)
	if code != 0 {
		t.Fatalf("run add %s: exit %d: %s", name, code, e)
	}
	return strings.TrimSpace(out[strings.LastIndex(strings.TrimSpace(out), "\n")+1:])
}

func writeFile(t *testing.T, name, text string) {
	t.Helper()
	if err := os.WriteFile(name, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
}

// TestOutcomeMeasurePrediction: with no polarity and no preset, the run's
// predicted coverage decides the polarity only when it is clear. With the
// illustrative parameters (no covariance, so no interval) the low-pressure
// template's 15 min grow step predicts coverage 1 (above 80 %: decides,
// domains the larger class) and a 1.1 min grow step 51.7 % (predict:
// neither below 20 % nor above 80 %: refused, nothing stored). The 80 %
// image measured so is within 0.015 of its drawn coverage (issue
// tolerance). An --instrument without --site reads the site file the
// run's recipe names.
func TestOutcomeMeasurePrediction(t *testing.T) {
	tmpl, err := filepath.Abs(tmplDir)
	if err != nil {
		t.Fatal(err)
	}
	truth := inFieldDir(t)
	db := "--db=log.db"
	full, half := logRecipe(t, db, tmpl, "15 min"), logRecipe(t, db, tmpl, "1.1 min")
	code, _, e := runCLI(t, db, "outcome", "measure", half, "--image", "b.png", "--pixel", "0.2um")
	if code != 2 || !strings.Contains(e, "predicted coverage 51.7 % (no interval") || !strings.Contains(e, "does not decide") {
		t.Errorf("prediction near one half: exit %d, stderr %q; want 2 saying the prediction does not decide", code, e)
	}
	if got := storedOutcomes(t, db, half); len(got) != 0 {
		t.Errorf("refused measurement stored %d outcomes: %+v", len(got), got)
	}
	code, _, e = runCLI(t, db, "outcome", "measure", full, "--image", "c.png", "--pixel", "0.2um")
	if code != 0 {
		t.Fatalf("prediction near one: exit %d: %s", code, e)
	}
	got := storedOutcomes(t, db, full)
	if len(got) == 0 || got[0].Metric != "coverage" || !strings.Contains(got[0].Method, "polarity_source prediction") {
		t.Fatalf("stored %+v, want coverage first with polarity_source prediction", got)
	}
	if math.Abs(got[0].Value-truth["c.png"]) > 0.015 {
		t.Errorf("coverage from the prediction's polarity: got %.4f, want %.4f ± 0.015", got[0].Value, truth["c.png"])
	}
	code, _, e = runCLI(t, db, "outcome", "measure", full, "--image", "a.png", "--instrument", "sem-1")
	if code != 0 {
		t.Fatalf("--instrument with the recipe's site file: exit %d: %s", code, e)
	}
	if got := storedOutcomes(t, db, full); !strings.Contains(got[len(got)-1].Method, "polarity_source instrument; instrument sem-1") {
		t.Errorf("last stored %+v, want polarity_source instrument from sem-1", got[len(got)-1])
	}
}
