package main

import (
	"bytes"
	"context"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
	"time"

	"github.com/spf13/cobra"

	"github.com/foilrun/foilrun/kinetics"
	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/store/sqlite"
)

type demoOptions struct {
	io    *streams
	dir   string
	runs  int
	force bool
}

func newDemoCmd(f *factory) *cobra.Command {
	opts := &demoOptions{io: f.io}
	cmd := &cobra.Command{
		Use:   "demo [DIR]",
		Short: "Lay out an invented demo lab and run the whole job on it",
		Long: `Lay out an invented demo lab in DIR (default ./foilrun-demo): a site file, two
furnaces, a recipe, a run log seeded with invented runs whose outcomes come
from the kinetics model plus noise, a furnace log and a synthetic micrograph.
Then run the main job on it, with headings: check, safety and the checklist,
predict, log a run from start to finish, measure it, query the log, fit the
kinetics and suggest the next recipe. The run log is an embedded SQLite file
in DIR, so the demo never touches your own log.`,
		Args: cobra.MaximumNArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			opts.dir = "foilrun-demo"
			if len(args) == 1 {
				opts.dir = args[0]
			}
			if opts.runs < 10 {
				return usagef("--runs %d: want at least 10 seeded runs", opts.runs)
			}
			return demoRun(cmd.Context(), opts)
		},
	}
	cmd.Flags().IntVar(&opts.runs, "runs", 60, "invented runs to seed the log with")
	cmd.Flags().BoolVar(&opts.force, "force", false, "reuse DIR even if it holds an earlier demo (its run log is replaced)")
	return cmd
}

// demoStep is one command of the walk-through.
type demoStep struct {
	title string
	args  []string
	want  int // expected exit status
}

func demoRun(ctx context.Context, o *demoOptions) error {
	if ctx == nil {
		ctx = context.Background()
	}
	began := time.Now()
	if entries, err := os.ReadDir(o.dir); err == nil && len(entries) > 0 {
		if !o.force {
			return withHint(usagef("%s is not empty", o.dir), "give an empty or new folder, or pass --force to reuse an earlier demo")
		}
	}
	paths, err := layDemoLab(o.dir)
	if err != nil {
		return err
	}
	for _, suffix := range []string{"", "-wal", "-shm"} {
		_ = os.Remove(paths.db + suffix)
	}
	out := o.io.Out
	fmt.Fprintf(out, "foilrun demo: an invented lab in %s (no real people, labs or products)\n", o.dir)

	// Seed the run log.
	log, err := sqlite.Open(ctx, paths.db)
	if err != nil {
		return err
	}
	if err := seedRuns(ctx, log, paths, o.runs); err != nil {
		log.Close()
		return fmt.Errorf("seed the demo run log: %w", err)
	}
	if err := log.Close(); err != nil {
		return err
	}
	fmt.Fprintf(out, "seeded %s with %d invented runs (outcomes from the kinetics model plus noise)\n", paths.db, o.runs)

	// The run the walk-through logs is a short nucleation run on the same
	// recipe, stopped at about 20 % coverage so the domains can be counted:
	// its recipe, furnace log and micrograph.
	f, err := recipe.LoadFurnace(paths.furnaceA)
	if err != nil {
		return err
	}
	minutes, res, err := shortGrowth(f, 0.2)
	if err != nil {
		return err
	}
	shortRecipe := filepath.Join(paths.recipes, "lowpressure-nucleation.yaml")
	if err := os.WriteFile(shortRecipe, []byte(demoRecipe(1000, nucleationCH4, minutes)), 0o644); err != nil {
		return err
	}
	r, err := recipe.LoadRecipe(shortRecipe)
	if err != nil {
		return err
	}
	plan := recipe.Derive(r, f)
	furnaceLog := filepath.Join(paths.logs, "tube-a-run.csv")
	if err := writeFurnaceLog(furnaceLog, plan); err != nil {
		return err
	}
	const pixel = 0.2e-6
	micrograph := filepath.Join(paths.images, "foil-nucleation.png")
	if _, err := writeDemoMicrograph(micrograph, pixel, res.NucleiDensity, res.Coverage); err != nil {
		return err
	}

	db := "--db=" + paths.db
	fitted := filepath.Join(paths.dir, "params-fitted.yaml")
	suggested := filepath.Join(paths.recipes, "suggested.yaml")
	steps := []demoStep{
		{"1. Check the recipe against the furnace", []string{"check", paths.recipe}, 0},
		{"2. Hazards of the recipe in this room", []string{"safety", paths.recipe}, 0},
		{"3. Print the pre-run checklist", []string{"checklist", paths.recipe, "--format", "markdown", "-o", filepath.Join(paths.dir, "checklist.md")}, 0},
		{"4. Predict coverage and domain size", []string{"predict", paths.recipe, "--plot", filepath.Join(paths.plots, "predict.png")}, 0},
		{"5. Log a short nucleation run: start it", []string{db, "run", "start", shortRecipe, "--operator", "operator A", "--lot", "demo-lot-4"}, 0},
	}
	code, err := o.walk(steps)
	if err != nil {
		return err
	}
	runCode := strings.TrimSpace(code)
	steps = []demoStep{
		{"6. Add a note while it runs", []string{db, "run", "note", runCode, "foil placed at the centre of the hot zone"}, 0},
		{"7. Finish it with the furnace controller's log", []string{db, "run", "finish", runCode, "--furnace-log", furnaceLog}, 0},
		{"8. Measure the foil: micrograph, transmittance, Raman", []string{db, "outcome", "measure", runCode, "--image", micrograph, "--pixel", "0.2um",
			"--polarity", "darker", "--overlay", filepath.Join(paths.images, "foil-nucleation-overlay.png"), "--transmittance", "97.6%", "--raman", "2d/g=2.4,d/g=0.06"}, 0},
		{"9. Which parameters gave good coverage?", []string{db, "runs", "best", "--metric", "coverage", "--min", "0.95", "--by", "ch4_flow_sccm,growth_time_min", "--bins", "3"}, 0},
		{"10. Which parameters matter most?", []string{db, "runs", "rank", "--metric", "coverage", "--min", "0.95"}, 0},
		{"11. Calibrate the kinetics from the log", []string{db, "fit", "--metric", "coverage,density", "--where", `status = "done"`, "--furnace", paths.furnaceA, "-o", fitted, "--plot", filepath.Join(paths.plots, "parity.png")}, 0},
		{"12. Plan the next recipe", []string{"suggest", paths.recipe, "--params", fitted, "--target", "coverage>=0.99", "--target", "domain_size>=15um", "--vary", "temperature=950C:1050C,CH4,duration", "-o", suggested}, 0},
		{"13. Check the suggested recipe", []string{"check", suggested}, 0},
	}
	if _, err := o.walk(steps); err != nil {
		return err
	}
	fmt.Fprintf(out, "\nDone in %.1f s. Files in %s:\n", time.Since(began).Seconds(), o.dir)
	for _, p := range []string{paths.site, paths.furnaceA, paths.furnaceB, paths.recipe, shortRecipe, suggested, fitted, furnaceLog, micrograph,
		filepath.Join(paths.dir, "checklist.md"), filepath.Join(paths.plots, "predict.png"), filepath.Join(paths.plots, "parity.png"), paths.db} {
		fmt.Fprintf(out, "  %s\n", p)
	}
	fmt.Fprintf(out, "Every safety output supports, and does not replace, the site's gas-safety review,\nthe local fire and compressed-gas codes, and the people licensed to approve the set-up.\n")
	return nil
}

// walk runs each step's command in-process under a heading, and returns
// the last step's standard output.
func (o *demoOptions) walk(steps []demoStep) (string, error) {
	var last string
	for _, s := range steps {
		heading(o.io.Out, s.title)
		shown := make([]string, 0, len(s.args))
		for _, a := range s.args {
			if strings.ContainsAny(a, " \"<>=") && !strings.HasPrefix(a, "--") {
				a = "'" + a + "'"
			}
			shown = append(shown, a)
		}
		fmt.Fprintf(o.io.Out, "$ foilrun %s\n", strings.Join(shown, " "))
		var buf bytes.Buffer
		io := &streams{In: strings.NewReader(""), Out: io.MultiWriter(o.io.Out, &buf), Err: o.io.Out}
		if code := run(s.args, io); code != s.want {
			return "", fmt.Errorf("demo step %q: foilrun %s exited %d, want %d", s.title, strings.Join(s.args, " "), code, s.want)
		}
		last = buf.String()
	}
	return last, nil
}

// nucleationCH4 is the CH4 flow (sccm) of the demo's short nucleation run:
// low, so domains grow slowly enough to stop the run while they are apart.
const nucleationCH4 = 5

// shortGrowth finds the grow time (0.1 min steps) at which the lab's
// kinetics reach the target coverage on the demo recipe.
func shortGrowth(f *recipe.Furnace, target float64) (float64, kinetics.Result, error) {
	var res kinetics.Result
	for tenths := 1; tenths <= 150; tenths++ {
		minutes := float64(tenths) / 10
		r, err := recipe.ParseRecipe("lowpressure-nucleation.yaml", []byte(demoRecipe(1000, nucleationCH4, minutes)))
		if err != nil {
			return 0, res, err
		}
		if res, err = kinetics.Predict(recipe.Derive(r, f), demoTruth(), kinetics.Options{}); err != nil {
			return 0, res, err
		}
		if res.Coverage >= target {
			return minutes, res, nil
		}
	}
	return 15, res, nil
}
