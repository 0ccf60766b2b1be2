package history

import (
	"math"
	"os"
	"strconv"
	"strings"
	"testing"

	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/store"
)

func convertInput(t *testing.T, sheet, mapText string) Input {
	t.Helper()
	tmpl, err := os.ReadFile("../../../../templates/recipe-lowpressure.yaml")
	if err != nil {
		t.Fatal(err)
	}
	f, err := recipe.LoadFurnace("../../../../templates/furnace.yaml")
	if err != nil {
		t.Fatal(err)
	}
	m, err := ParseMap("m.yaml", []byte(mapText))
	if err != nil {
		t.Fatal(err)
	}
	sh, err := ReadSheet("s.csv", strings.NewReader(sheet), "")
	if err != nil {
		t.Fatal(err)
	}
	return Input{Sheet: sh, Map: m, Template: tmpl, TemplateFile: "recipe-lowpressure.yaml",
		Furnace: Furnace{Furnace: f, Snapshot: store.NewFileSnapshot(store.SnapshotFurnace, f.Name, f.File, f.Content)}}
}

// Rows become recipes: a changed growth temperature moves the ramp and
// anneal before it; an empty cell keeps the template's value (1000 °C, 15
// min: templates/recipe-lowpressure.yaml) and gives no outcome; a cell's
// own unit wins; equal rows share one snapshot; provenance is kept.
func TestConvert(t *testing.T) {
	sheet := "Run,T (C),t,Cov\nA-1,1040,90 s,93\nA-2,,,\nA-3,1040,90 s,50\n"
	m := "code: Run\nsteps:\n  grow:\n    temperature: {column: \"T (C)\", unit: C}\n    duration: {column: t, unit: min}\noutcomes:\n  coverage: {column: Cov, unit: \"%\"}\n"
	res, err := Convert(convertInput(t, sheet, m))
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Runs) != 3 {
		t.Fatalf("got %d runs, want 3", len(res.Runs))
	}
	type want struct {
		grow, anneal, rampTo, minutes float64 // °C, °C, °C, min
		outcomes                      int
	}
	for i, w := range []want{{1040, 1040, 1040, 1.5, 1}, {1000, 1000, 1000, 15, 0}, {1040, 1040, 1040, 1.5, 1}} {
		run := res.Runs[i]
		r, err := recipe.ParseRecipe("x.yaml", run.Recipe.Content)
		if err != nil {
			t.Fatal(err)
		}
		g, a, rp := r.FirstStep(recipe.KindGrow), r.FirstStep(recipe.KindAnneal), r.FirstStep(recipe.KindRamp)
		for _, c := range []struct {
			what      string
			got, want float64
		}{
			{"grow °C", recipe.Celsius(r.Steps[g].Temperature.SI), w.grow},
			{"anneal °C", recipe.Celsius(r.Steps[a].Temperature.SI), w.anneal},
			{"ramp to °C", recipe.Celsius(r.Steps[rp].To.SI), w.rampTo},
			{"grow min", r.Steps[g].Duration.SI / 60, w.minutes},
		} {
			if math.Abs(c.got-c.want) > 1e-9 {
				t.Errorf("row %d: %s got %.10g, want %g", i+2, c.what, c.got, c.want)
			}
		}
		if len(run.Record.Outcomes) != w.outcomes {
			t.Errorf("row %d: got %d outcomes, want %d", i+2, len(run.Record.Outcomes), w.outcomes)
		}
		if want := "s.csv, row " + string(rune('2'+i)); run.Record.Source != want {
			t.Errorf("row %d: source %q, want %q", i+2, run.Record.Source, want)
		}
	}
	if res.Runs[0].Recipe.SHA256 != res.Runs[2].Recipe.SHA256 || res.Runs[0].Recipe.SHA256 == res.Runs[1].Recipe.SHA256 {
		t.Errorf("snapshots: rows 2 and 4 (same values) must share one, row 3 its own")
	}
	if res.Runs[0].Record.Outcomes[0].Value != 0.93 {
		t.Errorf("coverage 93 %%: got %g, want 0.93", res.Runs[0].Record.Outcomes[0].Value)
	}
}

// BenchmarkConvert10k is Convert of a 10,000-row sheet whose rows are all
// different recipes, without the run log.
func BenchmarkConvert10k(b *testing.B) {
	var sb strings.Builder
	sb.WriteString("T (C),t (min)\n")
	for i := range 10_000 {
		sb.WriteString(strconv.FormatFloat(960+float64(i)/100, 'f', 2, 64) + "," + strconv.FormatFloat(0.5+float64(i%7)/2, 'f', 2, 64) + "\n")
	}
	in := convertInput(&testing.T{}, sb.String(), "steps:\n  grow:\n    temperature: {column: \"T (C)\", unit: C}\n    duration: {column: \"t (min)\", unit: min}\n")
	for b.Loop() {
		if _, err := Convert(in); err != nil {
			b.Fatal(err)
		}
	}
}
