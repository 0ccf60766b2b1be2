package main

import (
	"bytes"
	"context"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"

	"github.com/spf13/cobra"

	"github.com/foilrun/foilrun/cmd/foilrun/internal/demolab"
)

type demoOptions struct {
	f     *factory
	dir   string
	runs  int
	force bool
}

func newDemoCmd(f *factory) *cobra.Command {
	opts := &demoOptions{f: f}
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
			if opts.runs < 10 || opts.runs > demolab.MaxSeedRuns {
				return usagef("--runs %d: want 10 to %d seeded runs", opts.runs, demolab.MaxSeedRuns)
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
	began := o.f.now()
	if entries, err := os.ReadDir(o.dir); err == nil && len(entries) > 0 {
		if !o.force {
			return withHint(usagef("%s is not empty", o.dir), "give an empty or new folder, or pass --force to reuse an earlier demo")
		}
	}
	paths, err := demolab.Lay(o.dir)
	if err != nil {
		return err
	}
	out := o.f.io.Out
	fmt.Fprintf(out, "foilrun demo: an invented lab in %s (no real people, labs or products)\n", o.dir)
	if err := demolab.SeedLog(ctx, paths, o.runs); err != nil {
		return err
	}
	fmt.Fprintf(out, "seeded %s with %d invented runs (outcomes from the kinetics model plus noise)\n", paths.DB, o.runs)
	short, err := demolab.WriteShortRun(paths)
	if err != nil {
		return err
	}
	d := demoFiles{paths: paths, short: short, fitted: filepath.Join(paths.Dir, "params-fitted.yaml"),
		suggested: filepath.Join(paths.Recipes, "suggested.yaml"), force: o.force}
	code, err := o.walk(d.beforeRun())
	if err != nil {
		return err
	}
	if _, err := o.walk(d.afterRun(strings.TrimSpace(code))); err != nil {
		return err
	}
	fmt.Fprintf(out, "\nDone in %.1f s. Files in %s:\n", o.f.now().Sub(began).Seconds(), o.dir)
	for _, p := range d.made() {
		fmt.Fprintf(out, "  %s\n", p)
	}
	fmt.Fprintf(out, "Every safety output supports, and does not replace, the site's gas-safety review,\nthe local fire and compressed-gas codes, and the people licensed to approve the set-up.\n")
	return nil
}

// demoFiles are the demo lab's files and those its walk-through writes.
type demoFiles struct {
	paths             demolab.Paths
	short             demolab.ShortRun
	fitted, suggested string
	force             bool // an earlier demo's outputs are replaced
}

// writes is a step's arguments, with --force when the demo reuses a
// folder whose earlier outputs the step replaces.
func (d demoFiles) writes(args ...string) []string {
	if d.force {
		return append(args, "--force")
	}
	return args
}

// beforeRun are the steps up to starting the short run, whose code the
// last one prints.
func (d demoFiles) beforeRun() []demoStep {
	p := d.paths
	return []demoStep{
		{"1. Check the recipe against the furnace", []string{"check", p.Recipe}, 0},
		{"2. Hazards of the recipe in this room", []string{"safety", p.Recipe}, 0},
		{"3. Print the pre-run checklist", d.writes("checklist", p.Recipe, "--format", "markdown", "-o", filepath.Join(p.Dir, "checklist.md")), 0},
		{"4. Predict coverage and domain size", d.writes("predict", p.Recipe, "--plot", filepath.Join(p.Plots, "predict.png")), 0},
		{"5. Log a short nucleation run: start it", []string{"--db=" + p.DB, "run", "start", d.short.Recipe, "--operator", "operator A", "--lot", "demo-lot-4"}, 0},
	}
}

// afterRun are the steps on the started run and the log.
func (d demoFiles) afterRun(run string) []demoStep {
	p, db := d.paths, "--db="+d.paths.DB
	return []demoStep{
		{"6. Add a note while it runs", []string{db, "run", "note", run, "foil placed at the centre of the hot zone"}, 0},
		{"7. Finish it with the furnace controller's log", []string{db, "run", "finish", run, "--furnace-log", d.short.FurnaceLog}, 0},
		{"8. Measure the foil: micrograph, transmittance, Raman", d.writes(db, "outcome", "measure", run, "--image", d.short.Micrograph, "--pixel", "0.2um",
			"--polarity", "darker", "--overlay", filepath.Join(p.Images, "foil-nucleation-overlay.png"), "--transmittance", "97.6%", "--raman", "2d/g=2.4,d/g=0.06"), 0},
		{"9. Which parameters gave good coverage?", []string{db, "runs", "best", "--metric", "coverage", "--min", "0.95", "--by", "ch4_flow_sccm,growth_time_min", "--bins", "3"}, 0},
		{"10. Which parameters matter most?", []string{db, "runs", "rank", "--metric", "coverage", "--min", "0.95"}, 0},
		{"11. Calibrate the kinetics from the log", d.writes(db, "fit", "--metric", "coverage,nuclei_density", "--where", `status = "done"`, "--furnace", p.FurnaceA, "-o", d.fitted, "--plot", filepath.Join(p.Plots, "parity.png")), 0},
		{"12. Plan the next recipe", d.writes("suggest", p.Recipe, "--params", d.fitted, "--target", "coverage>=0.99", "--target", "domain_size>=15um", "--vary", "temperature=950C:1050C,CH4,duration", "-o", d.suggested), 0},
		{"13. Check the suggested recipe", []string{"check", d.suggested}, 0},
	}
}

// made lists the files the demo leaves behind.
func (d demoFiles) made() []string {
	p := d.paths
	return []string{p.Site, p.FurnaceA, p.FurnaceB, p.Recipe, d.short.Recipe, d.suggested, d.fitted, d.short.FurnaceLog, d.short.Micrograph,
		filepath.Join(p.Dir, "checklist.md"), filepath.Join(p.Plots, "predict.png"), filepath.Join(p.Plots, "parity.png"), p.DB}
}

// walk runs each step's command in-process under a heading, and returns
// the last step's standard output.
func (o *demoOptions) walk(steps []demoStep) (string, error) {
	var last string
	for _, s := range steps {
		heading(o.f.io.Out, s.title)
		shown := make([]string, 0, len(s.args))
		for _, a := range s.args {
			if strings.ContainsAny(a, " \"<>=") && !strings.HasPrefix(a, "--") {
				a = "'" + a + "'"
			}
			shown = append(shown, a)
		}
		fmt.Fprintf(o.f.io.Out, "$ foilrun %s\n", strings.Join(shown, " "))
		// The step's streams are the demo's own, so its tables align on a
		// terminal and its status and progress go where the demo's go;
		// stdout is also kept, for the run code.
		var buf bytes.Buffer
		outer := o.f.io
		inner := &streams{In: strings.NewReader(""), Out: io.MultiWriter(outer.Out, &buf), Err: outer.Err, OutTTY: outer.OutTTY, ErrTTY: outer.ErrTTY}
		if code := run(s.args, inner); code != s.want {
			return "", fmt.Errorf("demo step %q: foilrun %s exited %d, want %d", s.title, strings.Join(s.args, " "), code, s.want)
		}
		last = buf.String()
	}
	return last, nil
}
