package demolab

import (
	"context"
	"math"
	"path/filepath"
	"testing"
	"time"

	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/store"
	"github.com/foilrun/foilrun/store/sqlite"
)

// TestLayLoads: every file the lab lays out loads, and the demo recipe
// passes check on both furnaces without errors (the walk-through's first
// step relies on it).
func TestLayLoads(t *testing.T) {
	p, err := Lay(t.TempDir())
	if err != nil {
		t.Fatal(err)
	}
	if _, err := recipe.LoadSite(p.Site); err != nil {
		t.Errorf("site: %v", err)
	}
	r, err := recipe.LoadRecipe(p.Recipe)
	if err != nil {
		t.Fatal(err)
	}
	for _, name := range []string{p.FurnaceA, p.FurnaceB} {
		t.Run(filepath.Base(name), func(t *testing.T) {
			f, err := recipe.LoadFurnace(name)
			if err != nil {
				t.Fatal(err)
			}
			for _, fd := range recipe.Check(recipe.Derive(r, f)) {
				if fd.Severity == recipe.Error {
					t.Errorf("check: %s: %s", fd.Rule, fd.Message)
				}
			}
		})
	}
}

// TestShortRun: the short run's micrograph is drawn at the coverage the
// lab's kinetics predict, about 20 % (ShortGrowth stops at the first
// 0.1 min step past 0.2; the drawing caps nothing below 0.9). Tolerance
// 0.05 absolute: random placement scatters the drawn coverage about the
// KJMA expectation 1 − exp(−n·a/A).
func TestShortRun(t *testing.T) {
	p, err := Lay(t.TempDir())
	if err != nil {
		t.Fatal(err)
	}
	f, err := recipe.LoadFurnace(p.FurnaceA)
	if err != nil {
		t.Fatal(err)
	}
	minutes, res, err := ShortGrowth(f, 0.2)
	if err != nil {
		t.Fatal(err)
	}
	if res.Coverage < 0.2 || minutes <= 0.1 || minutes >= 15 {
		t.Fatalf("short growth: %g min to coverage %g, want the first step past 0.2 within 15 min", minutes, res.Coverage)
	}
	truth, err := WriteMicrograph(filepath.Join(p.Images, "m.png"), MicrographPixel, res.NucleiDensity, res.Coverage)
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(truth-res.Coverage) > 0.05 {
		t.Errorf("drawn coverage %.4f, want the predicted %.4f ± 0.05", truth, res.Coverage)
	}
	if _, err := WriteShortRun(p); err != nil {
		t.Fatalf("write short run: %v", err)
	}
}

// TestSeed: the seeded log holds n finished runs, each with a recipe
// snapshot and a coverage in [0, 1].
func TestSeed(t *testing.T) {
	ctx := context.Background()
	p, err := Lay(t.TempDir())
	if err != nil {
		t.Fatal(err)
	}
	if err := SeedLog(ctx, p, 12); err != nil {
		t.Fatal(err)
	}
	l, err := sqlite.Open(ctx, p.DB)
	if err != nil {
		t.Fatal(err)
	}
	defer l.Close()
	n := 0
	err = l.Export(ctx, store.Filter{}, func(rec store.RunRecord) error {
		n++
		if rec.Status != store.Done || rec.RecipeHash == "" {
			t.Errorf("run %s: status %s, snapshot %q; want done with a snapshot", rec.Code, rec.Status, rec.RecipeHash)
		}
		for _, o := range rec.Outcomes {
			if o.Metric == "coverage" && (o.Value < 0 || o.Value > 1) {
				t.Errorf("run %s: coverage %g outside [0, 1]", rec.Code, o.Value)
			}
		}
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	if n != 12 {
		t.Errorf("got %d runs, want 12", n)
	}
}

// The seeded runs keep the demo's 26-hour rhythm while it fits in three
// years and are packed closer beyond that, so that the last run's
// outcome (measured 30 h after its start) stays within the five years
// ahead of the clock that the run log accepts (store/validate.go), for
// every run count the demo accepts; 1,770 runs at 26 h used to run past
// it.
func TestSeedStep(t *testing.T) {
	for _, c := range []struct {
		n    int
		want time.Duration
	}{
		{10, 26 * time.Hour},
		{60, 26 * time.Hour},
		{1010, 26 * time.Hour}, // 1,010 × 26 h is just under three years
		{1770, (seedSpan / 1770).Truncate(time.Minute)},
		{MaxSeedRuns, minSeedStep},
	} {
		got := seedStep(c.n)
		if got != c.want {
			t.Errorf("%d runs: got a step of %s, want %s", c.n, got, c.want)
		}
		last := time.Duration(c.n-1)*got + 30*time.Hour
		if last > store.FutureSlack || got < minSeedStep {
			t.Errorf("%d runs: the last outcome is %s after the first start with a step of %s; want within five years, step ≥ %s", c.n, last, got, minSeedStep)
		}
	}
	if err := Seed(context.Background(), nil, Paths{}, MaxSeedRuns+1); err == nil {
		t.Errorf("Seed of %d runs: got no error, want one naming the limit %d", MaxSeedRuns+1, MaxSeedRuns)
	}
}
