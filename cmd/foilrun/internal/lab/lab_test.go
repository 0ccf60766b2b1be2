package lab

import (
	"context"
	"errors"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/foilrun/foilrun/kinetics"
	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/store"
	"github.com/foilrun/foilrun/store/sqlite"
)

const templates = "../../../../templates/"

// testLab is a run log in a temporary SQLite file and a folder holding the
// low-pressure template recipe (which names "furnace.yaml") and the
// template furnace.
type testLab struct {
	t      *testing.T
	dir    string
	log    store.RunLog
	recipe []byte // the template recipe's bytes
}

func newLab(t *testing.T) *testLab {
	t.Helper()
	dir := t.TempDir()
	for _, f := range []string{"furnace.yaml", "recipe-lowpressure.yaml"} {
		b, err := os.ReadFile(templates + f)
		if err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(filepath.Join(dir, f), b, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	l, err := sqlite.Open(context.Background(), filepath.Join(dir, "runs.db"))
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { l.Close() })
	data, err := os.ReadFile(filepath.Join(dir, "recipe-lowpressure.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	return &testLab{t: t, dir: dir, log: l, recipe: data}
}

// add logs a run through the store API; text is the recipe snapshot
// (none when empty), read from file.
func (lb *testLab) add(code, file, text string, outcomes ...store.Outcome) store.RunRecord {
	lb.t.Helper()
	ctx := context.Background()
	rec := store.RunRecord{Run: store.Run{Code: code, Status: store.Done, RecipeName: "r"}, Outcomes: outcomes}
	var snap *store.Snapshot
	if text != "" {
		s := store.NewSnapshot("r", file, []byte(text))
		snap = &s
	}
	if _, err := lb.log.CreateRun(ctx, rec, snap); err != nil {
		lb.t.Fatal(err)
	}
	got, err := lb.log.Record(ctx, code)
	if err != nil {
		lb.t.Fatal(err)
	}
	return got
}

// withFurnace is the template recipe naming another furnace path.
func (lb *testLab) withFurnace(path string) string {
	text := string(lb.recipe)
	line := "furnace: furnace.yaml"
	if !strings.Contains(text, line) {
		lb.t.Fatalf("template recipe lacks %q", line)
	}
	if path == "" {
		return strings.Replace(text, line, "", 1)
	}
	return strings.Replace(text, line, "furnace: "+path, 1)
}

func TestRebuildFurnaceRule(t *testing.T) {
	lb := newLab(t)
	here := filepath.Join(lb.dir, "recipe-lowpressure.yaml")
	elsewhere := filepath.Join(t.TempDir(), "moved.yaml") // a folder without furnace.yaml
	abs := filepath.Join(lb.dir, "furnace.yaml")
	cases := []struct {
		name     string
		override string
		file     string // the snapshot's file
		text     string
		wantPath string
		wantErr  error
		wantText string // part of the error message
	}{
		{"relative to the snapshot's folder", "", here, string(lb.recipe), abs, nil, ""},
		{"absolute as written", "", elsewhere, lb.withFurnace(abs), abs, nil, ""},
		{"override wins over a missing file", abs, elsewhere, string(lb.recipe), abs, nil, ""},
		{"override wins over no furnace", abs, here, lb.withFurnace(""), abs, nil, ""},
		{"relative file gone", "", elsewhere, string(lb.recipe) + "# moved\n", "", ErrNoFurnace,
			`names furnace "furnace.yaml", not found at ` + filepath.Join(filepath.Dir(elsewhere), "furnace.yaml") + " (the run was logged before the log kept furnace files)"},
		{"recipe names no furnace", "", here, lb.withFurnace(""), "", ErrNoFurnace, `recipe "low-pressure monolayer" names no furnace`},
		{"no snapshot", "", "", "", "", ErrNoSnapshot, "logged without a recipe snapshot"},
	}
	for i, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			rec := lb.add("R-"+string(rune('a'+i)), c.file, c.text)
			b, err := NewRebuilder(lb.log, c.override)
			if err != nil {
				t.Fatal(err)
			}
			rb, err := b.Rebuild(context.Background(), rec)
			if c.wantErr != nil {
				if !errors.Is(err, c.wantErr) || !strings.Contains(err.Error(), c.wantText) {
					t.Fatalf("got error %v, want %v containing %q", err, c.wantErr, c.wantText)
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			if rb.FurnacePath != c.wantPath {
				t.Errorf("furnace path: got %s, want %s", rb.FurnacePath, c.wantPath)
			}
			// The rebuilt plan is the plan of the same recipe loaded from
			// its file on the same furnace.
			f, err := recipe.LoadFurnace(c.wantPath)
			if err != nil {
				t.Fatal(err)
			}
			r, err := recipe.ParseRecipe(c.file, []byte(c.text))
			if err != nil {
				t.Fatal(err)
			}
			want := recipe.Derive(r, f)
			if rb.Plan.Total != want.Total || len(rb.Plan.Steps) != len(want.Steps) || rb.Furnace.Name != f.Name {
				t.Errorf("plan: got %d steps %g s on %q, want %d steps %g s on %q", len(rb.Plan.Steps), rb.Plan.Total, rb.Furnace.Name,
					len(want.Steps), want.Total, f.Name)
			}
		})
	}
}

func TestRebuilderBadOverride(t *testing.T) {
	lb := newLab(t)
	if _, err := NewRebuilder(lb.log, filepath.Join(lb.dir, "nope.yaml")); err == nil || !strings.Contains(err.Error(), "nope.yaml") {
		t.Errorf("got %v, want an error naming the missing override", err)
	}
}

// TestRebuildShares: runs with one snapshot share one plan, and Used
// counts each run.
func TestRebuildShares(t *testing.T) {
	lb := newLab(t)
	here := filepath.Join(lb.dir, "recipe-lowpressure.yaml")
	a := lb.add("S-1", here, string(lb.recipe))
	b := lb.add("S-2", here, string(lb.recipe))
	rb, err := NewRebuilder(lb.log, "")
	if err != nil {
		t.Fatal(err)
	}
	p1, err := rb.Rebuild(context.Background(), a)
	if err != nil {
		t.Fatal(err)
	}
	p2, err := rb.Rebuild(context.Background(), b)
	if err != nil {
		t.Fatal(err)
	}
	if p1 != p2 {
		t.Error("two runs of one snapshot got two plans")
	}
	used := rb.Used()
	if len(used) != 1 || used[0].Runs != 2 || used[0].Name != p1.Furnace.Name {
		t.Errorf("used: got %+v, want one furnace %q for 2 runs", used, p1.Furnace.Name)
	}
}

func TestCollect(t *testing.T) {
	lb := newLab(t)
	here := filepath.Join(lb.dir, "recipe-lowpressure.yaml")
	text := string(lb.recipe)
	cov := func(v float64) store.Outcome { return store.Outcome{Metric: "coverage", Value: v, Unit: "1"} }
	den := func(v float64, unit string) store.Outcome {
		return store.Outcome{Metric: "nuclei_density", Value: v, Unit: unit}
	}
	lb.add("C-1", here, text, cov(0.8), cov(0.9))
	lb.add("C-2", here, text, den(120, "1/mm2"))
	lb.add("C-3", here, text, cov(0.5), den(40, "1/mm2"))
	lb.add("C-4", here, text, store.Outcome{Metric: "domain_size", Value: 12, Unit: "um"})
	lb.add("C-5", "", "", cov(0.7))
	nan := math.NaN()
	// Nuclei densities: 1 mm² = 1e-6 m² (SI prefix, exact), so 120 per mm²
	// is 1.2e8 per m²; tolerance 1e-12 relative (rounding only).
	type want struct {
		code     string
		cov, den float64
	}
	cases := []struct {
		name    string
		m       Metrics
		start   kinetics.Params
		want    []want
		skipped []string
		planned int // runs rebuilt on the furnace
	}{
		{"both metrics", Metrics{Coverage: true, Density: true}, kinetics.DefaultParams(),
			[]want{{"C-1", 0.85, nan}, {"C-2", nan, 1.2e8}, {"C-3", 0.5, 4e7}}, []string{"C-5: logged without a recipe snapshot"}, 3},
		{"coverage only", Metrics{Coverage: true}, kinetics.DefaultParams(),
			[]want{{"C-1", 0.85, nan}, {"C-3", 0.5, nan}}, []string{"C-5: logged without a recipe snapshot"}, 2},
		{"density only", Metrics{Density: true}, kinetics.DefaultParams(),
			[]want{{"C-2", nan, 1.2e8}, {"C-3", nan, 4e7}}, nil, 2},
		{"unusable start parameters skip every run", Metrics{Density: true}, kinetics.Params{},
			nil, []string{"C-2: kinetics parameters", "C-3: kinetics parameters"}, 2},
	}
	same := func(got, want float64) bool {
		if math.IsNaN(want) {
			return math.IsNaN(got)
		}
		return math.Abs(got-want) <= 1e-12*math.Abs(want)
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			b, err := NewRebuilder(lb.log, "")
			if err != nil {
				t.Fatal(err)
			}
			got, err := Collect(context.Background(), b, store.Filter{}, c.m, c.start, Logged)
			if err != nil {
				t.Fatal(err)
			}
			if len(got.Observations) != len(c.want) {
				t.Fatalf("got %d observations, want %d", len(got.Observations), len(c.want))
			}
			for i, w := range c.want {
				o := got.Observations[i]
				if o.Label != w.code || !same(o.Coverage, w.cov) || !same(o.NucleiDensity, w.den) || o.Prepared == nil {
					t.Errorf("observation %d: got %s coverage %g density %g /m² prepared %v, want %s %g %g",
						i, o.Label, o.Coverage, o.NucleiDensity, o.Prepared != nil, w.code, w.cov, w.den)
				}
			}
			if len(got.Skipped) != len(c.skipped) {
				t.Fatalf("skipped: got %v, want %v", got.Skipped, c.skipped)
			}
			for i, s := range c.skipped {
				if !strings.HasPrefix(got.Skipped[i].String(), s) {
					t.Errorf("skipped %d: got %q, want it to start %q", i, got.Skipped[i], s)
				}
			}
			if len(got.Furnaces) != 1 || got.Furnaces[0].Runs != c.planned {
				t.Errorf("furnaces: got %+v, want one for %d runs", got.Furnaces, c.planned)
			}
		})
	}
}

// TestCollectMissingFurnace: a run whose furnace cannot be found stops the
// collection with ErrNoFurnace rather than being skipped.
func TestCollectMissingFurnace(t *testing.T) {
	lb := newLab(t)
	lb.add("M-1", filepath.Join(t.TempDir(), "x.yaml"), string(lb.recipe), store.Outcome{Metric: "coverage", Value: 0.5, Unit: "1"})
	b, err := NewRebuilder(lb.log, "")
	if err != nil {
		t.Fatal(err)
	}
	_, err = Collect(context.Background(), b, store.Filter{}, Metrics{Coverage: true}, kinetics.DefaultParams(), Logged)
	var fe *FurnaceError
	if !errors.Is(err, ErrNoFurnace) || !errors.As(err, &fe) || fe.Run != "M-1" {
		t.Errorf("got %v, want a *FurnaceError for run M-1", err)
	}
}
