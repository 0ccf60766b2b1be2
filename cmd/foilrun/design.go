package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"

	"github.com/spf13/cobra"

	"github.com/foilrun/foilrun/cmd/foilrun/internal/lab"
	"github.com/foilrun/foilrun/cmd/foilrun/internal/outfile"
	"github.com/foilrun/foilrun/kinetics"
	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/recipe/infile"
	"github.com/foilrun/foilrun/store"
)

type designOptions struct {
	f         *factory
	recipe    string
	flags     recipeFlags
	runs      int
	params    string
	where     []string
	vary      []string
	measure   string
	criterion string
	targets   []string
	seed      uint64
	outDir    string
	force     bool
	output    outputFormat
}

func newDesignCmd(f *factory) *cobra.Command {
	opts := &designOptions{f: f}
	cmd := &cobra.Command{
		Use:   "design RECIPE --runs K",
		Short: "Propose the next runs that shrink the calibration's uncertainty most",
		Long: `Choose K settings of the recipe's first grow step, inside the same space and
limits as foilrun suggest (--vary, default temperature,CH4,duration), that
together with the logged runs maximise the determinant of the Fisher
information of the fitted parameters (D-optimal design): the runs that
shrink the volume of the parameters' confidence region most. When neither
the log nor the new runs measure nuclei_density the criterion is on what
coverage identifies (En+2Eg and I·G²·κ at T_ref), as foilrun fit does.
--criterion target --target 'coverage>=0.99' instead picks the runs that
shrink the expected variance of the target quantity at the recipe foilrun
suggest would choose for that target, so the runs go where the decision is.

The calibration is --params FILE, else a fit of the logged runs selected by
--where, else the illustrative defaults (said which). Measurement errors come
from the fit's residual spread (0.3 on each scale without a fit). The search
is exchange with random restarts under --seed: the same seed, the same runs.

Prints each run (settings, predicted coverage with its 95 % interval from the
logged runs), the expected standard error of each parameter now and after the
K runs, and what measuring nuclei_density on each run would add. -o DIR writes
the K recipes (NAME-design-01.yaml, …), each passing foilrun check, ready for
foilrun run. The runs still need the usual hazard review before they go in
the furnace: foilrun safety on each.`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			opts.recipe = args[0]
			switch opts.criterion {
			case "d", "D":
			case kinetics.DesignTarget:
				if len(opts.targets) == 0 {
					return withHint(usagef("--criterion target needs --target"), "give the outcome suggest would aim at, e.g. --target 'coverage>=0.99'")
				}
			default:
				return withHint(usagef("--criterion %q: want d or target", opts.criterion), "d shrinks every parameter's uncertainty; target the one of the --target quantity at suggest's recipe")
			}
			return designRun(cmd.Context(), opts)
		},
	}
	opts.flags.register(cmd)
	cmd.Flags().IntVar(&opts.runs, "runs", 0, fmt.Sprintf("how many runs to propose, 1 to %d", kinetics.MaxDesignRuns))
	cmd.Flags().StringVar(&opts.params, "params", "", "calibration parameter file (default: a fit of the logged runs, else the illustrative parameters)")
	cmd.Flags().StringArrayVar(&opts.where, "where", nil, "select the logged runs, as in runs list (repeatable; all must hold)")
	cmd.Flags().StringSliceVar(&opts.vary, "vary", nil, "grow-step parameters the runs may change, with optional =FROM:TO ranges (default temperature,CH4,duration)")
	cmd.Flags().StringVar(&opts.measure, "measure", kinetics.MetricCoverage, "what the new runs will measure: coverage or coverage,nuclei_density")
	cmd.Flags().StringVar(&opts.criterion, "criterion", "d", "design criterion: d (determinant of the information) or target (variance of the --target quantity at suggest's recipe)")
	cmd.Flags().StringArrayVar(&opts.targets, "target", nil, "outcome suggest would aim at, METRIC>=VALUE or METRIC<=VALUE, e.g. coverage>=0.99 (repeatable; the first is watched)")
	cmd.Flags().Uint64Var(&opts.seed, "seed", 1, "seed of the candidate sampling and the random restarts")
	cmd.Flags().StringVarP(&opts.outDir, "output-dir", "o", "", "write the proposed recipes into this folder")
	addForceFlag(cmd, &opts.force)
	addOutputFlag(cmd, &opts.output)
	return cmd
}

// calibration is the starting point of a design: the parameters, the
// logged runs and the measurement scales, and a line saying which.
type calibration struct {
	params   kinetics.Params
	existing []kinetics.Observation
	sc, sd   float64
	source   string
}

// calibrate reads the logged runs and picks the calibration: --params,
// else a fit of the runs, else the defaults. The scales come from a fit of
// the runs whenever one succeeds.
func (opts *designOptions) calibrate(ctx context.Context) (calibration, error) {
	start, err := loadParams(opts.params)
	if err != nil {
		return calibration{}, err
	}
	c := calibration{params: start, source: "params file " + opts.params}
	if opts.params == "" {
		c.source = "illustrative defaults, not a calibration"
	}
	l, err := opts.f.runLog(ctx)
	if err != nil {
		return c, err
	}
	b, err := lab.NewRebuilder(l, opts.flags.furnace)
	if err != nil {
		return c, err
	}
	col, err := lab.Collect(ctx, b, store.Filter{Where: opts.where}, lab.Metrics{Coverage: true, Density: true}, start, lab.Logged)
	if errors.Is(err, lab.ErrNoFurnace) {
		return c, withHint(fmt.Errorf("design: %w", err), "pass --furnace FILE")
	}
	if err != nil {
		return c, fmt.Errorf("design: %w", err)
	}
	c.existing = col.Observations
	if len(c.existing) == 0 {
		return c, nil
	}
	res, err := kinetics.Fit(c.existing, start, kinetics.FitSettings{})
	if err != nil {
		fmt.Fprintf(opts.f.io.Err, "design: the %d logged runs do not fit (%v); using %s\n", len(c.existing), err, c.source)
		return c, nil
	}
	c.sc, c.sd = kinetics.DesignScales(res)
	if opts.params == "" {
		c.params, c.source = res.Params, res.Params.Source
	}
	return c, nil
}

func designRun(ctx context.Context, opts *designOptions) error {
	density := false
	switch strings.ReplaceAll(opts.measure, " ", "") {
	case "coverage":
	case "coverage,nuclei_density", "nuclei_density,coverage":
		density = true
	default:
		return withHint(usagef("--measure %q: want coverage or coverage,nuclei_density", opts.measure), "coverage is always measured; add nuclei_density when the runs will be counted")
	}
	plan, site, err := opts.flags.loadPlan(opts.recipe)
	if err != nil {
		return err
	}
	guard := opts.f.guard(opts.force, append(planInputs(plan, site), outfile.Input{What: "params file", Path: opts.params}, outfile.Input{What: "furnace file", Path: opts.flags.furnace})...)
	cal, err := opts.calibrate(ctx)
	if err != nil {
		return err
	}
	fmt.Fprintf(opts.f.io.Err, "calibration: %s; %d logged runs\n", cal.source, len(cal.existing))
	spec := kinetics.DesignSpec{Runs: opts.runs, Vary: opts.vary, Density: density, Params: cal.params, Existing: cal.existing,
		CoverageScale: cal.sc, DensityScale: cal.sd, Rand: rand.New(rand.NewPCG(opts.seed, 20)), Criterion: strings.ToLower(opts.criterion)}
	for _, s := range opts.targets {
		tg, err := kinetics.ParseTarget(s)
		if err != nil {
			return onFlag(err)
		}
		spec.Targets = append(spec.Targets, tg)
	}
	d, err := kinetics.Design(plan, spec)
	var ie *kinetics.InputError
	if errors.As(err, &ie) && ie.Reason == kinetics.ReasonRunCount {
		return withHint(asUsage(fmt.Errorf("--runs: %w", err)), ie.Hint())
	}
	if err != nil {
		return onFlag(err)
	}
	files, err := opts.writeRecipes(plan, d, guard)
	if err != nil {
		return err
	}
	out := designJSON(plan, d, cal.source, files)
	switch opts.output {
	case formatJSON:
		return writeJSON(opts.f.io.Out, out)
	case formatCSV:
		return writeCSV(opts.f.io.Out, designRunTable(out))
	}
	return printDesign(opts.f.io.Out, out, density)
}

// writeRecipes writes each proposed run's recipe into the output folder
// through the recipe editor (the rest of the file kept), after checking
// that it loads and passes check without errors; it returns the paths.
func (opts *designOptions) writeRecipes(plan *recipe.Plan, d *kinetics.DesignResult, guard outfile.Guard) ([]string, error) {
	if opts.outDir == "" {
		return nil, nil
	}
	data, err := infile.ReadFile(opts.recipe, infile.Recipe)
	if err != nil {
		return nil, err
	}
	if err := os.MkdirAll(opts.outDir, 0o755); err != nil {
		return nil, fmt.Errorf("design: %w", err)
	}
	stem := strings.TrimSuffix(filepath.Base(opts.recipe), filepath.Ext(opts.recipe))
	var paths []string
	for i, run := range d.Runs {
		path := filepath.Join(opts.outDir, fmt.Sprintf("%s-design-%02d.yaml", stem, i+1))
		if err := checkOutput(path, guard); err != nil {
			return nil, err
		}
		written, err := recipe.EditRecipe(data, recipe.Edit{Step: d.Step, Changes: stepEdits(run.Changes), From: opts.recipe, To: path})
		if err != nil {
			return nil, fmt.Errorf("design: run %d: %w", i+1, err)
		}
		r, err := recipe.ParseRecipe(path, written)
		if err != nil {
			return nil, fmt.Errorf("design: run %d: the changed recipe does not load: %w", i+1, err)
		}
		for _, fd := range recipe.Check(recipe.Derive(r, plan.Furnace)) {
			if fd.Severity == recipe.Error {
				return nil, fmt.Errorf("design: run %d: the changed recipe fails check: %s: %s", i+1, fd.Rule, fd.Message)
			}
		}
		if err := writeBytes(path, guard, written); err != nil {
			return nil, fmt.Errorf("design: %w", err)
		}
		fmt.Fprintf(opts.f.io.Err, "wrote %s\n", path)
		paths = append(paths, path)
	}
	return paths, nil
}

type designRunJSON struct {
	Changes       []kinetics.Change `json:"changes"`
	Coverage      float64           `json:"coverage"`
	CoverageLow   *float64          `json:"coverage_low"`
	CoverageHigh  *float64          `json:"coverage_high"`
	SEWithDensity []*float64        `json:"se_with_nuclei_density"`
	File          string            `json:"file,omitempty"`
}

type designSEJSON struct {
	Name  string   `json:"name"`
	Unit  string   `json:"unit"`
	Now   *float64 `json:"se_now"`
	After *float64 `json:"se_after"`
}

type designResultJSON struct {
	Recipe       string            `json:"recipe"`
	Step         string            `json:"step"`
	Calibration  string            `json:"calibration"`
	Runs         []designRunJSON   `json:"runs"`
	SE           []designSEJSON    `json:"standard_errors"`
	DensityNames []string          `json:"density_names"`
	DensityBase  []*float64        `json:"se_density_base"`
	Pool         int               `json:"candidates"`
	Criterion    string            `json:"criterion"`
	Target       *designTargetJSON `json:"target,omitempty"`
}

// designTargetJSON is the target quantity watched at suggest's recipe.
type designTargetJSON struct {
	Quantity    string   `json:"quantity"`
	Temperature float64  `json:"temperature_c"`
	Duration    float64  `json:"duration_min"`
	Coverage    float64  `json:"coverage"`
	Now         *float64 `json:"se_now"`
	After       *float64 `json:"se_after"`
}

func opts6(xs []float64) []*float64 {
	out := make([]*float64, len(xs))
	for i, x := range xs {
		out[i] = opt6(x)
	}
	return out
}

func designJSON(plan *recipe.Plan, d *kinetics.DesignResult, source string, files []string) designResultJSON {
	out := designResultJSON{Recipe: plan.Recipe.Name, Step: plan.Recipe.Steps[d.Step].Label(d.Step), Calibration: source,
		DensityNames: d.DensityNames, DensityBase: opts6(d.SEDensityBase), Pool: d.Pool, Criterion: d.Criterion}
	if c := d.Target; c != nil {
		out.Target = &designTargetJSON{Quantity: d.TargetQuantity, Temperature: round6(recipe.Celsius(c.Temperature)), Duration: round6(c.Duration / 60),
			Coverage: round6(c.Coverage), Now: opt6(d.TargetSENow), After: opt6(d.TargetSEAfter)}
	}
	for i, r := range d.Runs {
		j := designRunJSON{Changes: r.Changes, Coverage: round6(r.Coverage), CoverageLow: opt6(r.CoverageLow), CoverageHigh: opt6(r.CoverageHigh),
			SEWithDensity: opts6(r.SEWithDensity)}
		if i < len(files) {
			j.File = files[i]
		}
		out.Runs = append(out.Runs, j)
	}
	for i, n := range d.Names {
		out.SE = append(out.SE, designSEJSON{Name: n, Unit: d.Units[i], Now: opt6(d.SENow[i]), After: opt6(d.SEAfter[i])})
	}
	return out
}

func seText(v *float64) string {
	if v == nil {
		return "not identified"
	}
	return num(*v, 3)
}

func designRunTable(r designResultJSON) table {
	t := table{Header: []string{"run", "settings", "coverage %", "95 % interval"}, Numeric: []bool{true, false, true, false}}
	for i, run := range r.Runs {
		var ch []string
		for _, c := range run.Changes {
			ch = append(ch, c.Field+" "+c.Text)
		}
		iv := "not identified"
		if run.CoverageLow != nil && run.CoverageHigh != nil {
			iv = fixed(*run.CoverageLow*100, 1) + " to " + fixed(*run.CoverageHigh*100, 1)
		}
		t.add(fmt.Sprint(i+1), strings.Join(ch, ", "), fixed(run.Coverage*100, 1), iv)
	}
	return t
}

func printDesign(w io.Writer, r designResultJSON, density bool) error {
	fmt.Fprintf(w, "recipe %q, step %s: %d runs chosen from %d candidates; calibration: %s\n", r.Recipe, r.Step, len(r.Runs), r.Pool, r.Calibration)
	heading(w, "Proposed runs")
	if err := writeTable(w, designRunTable(r)); err != nil {
		return err
	}
	heading(w, "Expected standard errors")
	t := table{Header: []string{"parameter", "unit", "now", "after the runs"}, Numeric: []bool{false, false, true, true}}
	for _, s := range r.SE {
		t.add(s.Name, s.Unit, seText(s.Now), seText(s.After))
	}
	if err := writeTable(w, t); err != nil {
		return err
	}
	if tg := r.Target; tg != nil {
		fmt.Fprintf(w, "\ncriterion %s; at the recipe suggest chooses (temperature %s C, duration %s min, coverage %s %%) the SE of %s is %s now, %s after the runs\n",
			r.Criterion, fixed(tg.Temperature, 1), fixed(tg.Duration, 2), fixed(tg.Coverage*100, 1), tg.Quantity, seText(tg.Now), seText(tg.After))
	}
	if !density {
		heading(w, "Also measuring nuclei_density on a run")
		t := table{Header: append([]string{"run"}, r.DensityNames...)}
		t.Numeric = make([]bool, len(t.Header))
		base := []string{"none"}
		for _, v := range r.DensityBase {
			base = append(base, seText(v))
		}
		t.add(base...)
		for i, run := range r.Runs {
			row := []string{fmt.Sprint(i + 1)}
			for _, v := range run.SEWithDensity {
				row = append(row, seText(v))
			}
			t.add(row...)
		}
		if err := writeTable(w, t); err != nil {
			return err
		}
	}
	fmt.Fprintln(w, "Every proposed recipe passes foilrun check; run foilrun safety on each before it goes in the furnace, and follow the site's gas code.")
	return nil
}
