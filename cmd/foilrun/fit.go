package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"strings"
	"time"

	"github.com/spf13/cobra"

	"github.com/foilrun/foilrun/cmd/foilrun/internal/chart"
	"github.com/foilrun/foilrun/cmd/foilrun/internal/lab"
	"github.com/foilrun/foilrun/cmd/foilrun/internal/outfile"
	"github.com/foilrun/foilrun/kinetics"
	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/store"
)

type fitOptions struct {
	f       *factory
	metrics lab.Metrics // --metric, parsed
	conds   lab.Source  // --conditions, parsed
	where   []string
	fix     []string
	bounds  []string
	furnace string
	params  string
	outFile string
	plot    string
	force   bool
	output  outputFormat
	// inputs are the files the fit read: --params, --furnace and the
	// furnace files the plans were rebuilt on; its outputs never replace
	// them.
	inputs []outfile.Input
}

func newFitCmd(f *factory) *cobra.Command {
	opts := &fitOptions{f: f}
	var metrics, conds string
	cmd := &cobra.Command{
		Use:   "fit",
		Short: "Calibrate the kinetics parameters from logged runs",
		Long: `Fit the nucleation and growth model to logged runs that have a measured
coverage and/or nuclei_density, by weighted nonlinear least squares
(Levenberg–Marquardt): coverage on the complementary log-log scale
ln(−ln(1−θ)), with θ clipped to [0.001, 0.999], nuclei density as ln N,
prefactors fitted as logarithms. When both metrics are fitted each gets the
weight 1/σ² with σ its own RMS residual after a first pass.

Each run's plan is rebuilt from its recipe snapshot and a furnace: --furnace
FILE, or the recipe's own "furnace:" path next to the file the snapshot was
read from. --conditions logged (the default) lets the model see what a run's
furnace log recorded where it has one (the control thermocouple's mean
temperature, the corrected flows and the pressure of each logged step), the
plan otherwise; --conditions planned always the plan. Prints the estimates with standard errors, the correlation of each
activation energy with its prefactor, the goodness of fit, the residual of
every run (worst first, with the conditions it used) and warnings when the data cannot identify a
parameter. -o FILE writes a parameter file, with the covariance, that
predict, window and suggest accept.

Coverage alone cannot separate nucleation from growth: θ depends on I·G²
(continuous nucleation) or N0·G² (site-saturated). With --metric coverage the
fit estimates the combinations En+2Eg and I·G²·κ at T_ref (2Eg and N0·G²·κ
at T_ref site-saturated) with standard errors and reports the separate
parameters as not identifiable; the parameter file it writes is marked
coverage_only, and predict, window and suggest then give coverage and times
to coverage but not nuclei density or domain size. Prefactors are referred
to T_ref, the runs' median growth temperature (printed), and their
uncertainty is shown as a factor (×/÷).

Bounds (from the model's own domain): energies −5 to 8 eV (an effective
nucleation energy may be negative), orders a and b 0 to 4, prefactors
1e-300 to 1e300. A parameter that ends on a bound is reported (at_bound);
--bound NAME=LO:HI moves the bounds (e.g. --bound En=-3:6). The params file
written with -o records the bounds used (bounds:), and a fit started from it
(--params FILE) keeps them unless --bound moves them.

--fix NAME=VALUE holds a parameter (En, I0, a, b, Eg, G0, N0 or the file's
names; eV, /m2/s, m/s, /m2). --params FILE gives the start point and the
fixed settings (reference pressure, shape, mode); default the illustrative
parameters.`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			if opts.plot != "" {
				if err := checkPlotPath(opts.plot); err != nil {
					return err
				}
				if opts.plot == opts.outFile {
					return usagef("-o and --plot are both %q; give two files", opts.plot)
				}
			}
			m, err := fitMetrics(metrics)
			if err != nil {
				return err
			}
			opts.metrics = m
			if opts.conds, err = lab.ParseSource(conds); err != nil {
				return usagef("--%v", err)
			}
			return fitRun(cmd.Context(), opts)
		},
	}
	cmd.Flags().StringVar(&metrics, "metric", kinetics.MetricCoverage+","+kinetics.MetricNucleiDensity,
		"metrics to fit: coverage, nuclei_density or both (comma-separated)")
	cmd.Flags().StringVar(&conds, "conditions", "logged", "conditions the model sees: logged (the furnace log where a run has one, else the plan) or planned")
	cmd.Flags().StringArrayVar(&opts.where, "where", nil, "select runs, as in runs list (repeatable; all must hold)")
	cmd.Flags().StringArrayVar(&opts.fix, "fix", nil, "hold a parameter fixed, NAME=VALUE such as Eg=1.9 (repeatable)")
	cmd.Flags().StringArrayVar(&opts.bounds, "bound", nil, "keep a parameter within LO:HI, NAME=LO:HI such as En=-3:6 (repeatable; defaults in --help)")
	cmd.Flags().StringVar(&opts.furnace, "furnace", "", "furnace file for every run (default: each recipe's own furnace path)")
	cmd.Flags().StringVar(&opts.params, "params", "", "start parameter file (default: illustrative parameters)")
	cmd.Flags().StringVarP(&opts.outFile, "output-file", "o", "", "write the calibrated parameter file here")
	cmd.Flags().StringVar(&opts.plot, "plot", "", "write a parity plot (measured against predicted) to this .png or .svg file")
	addForceFlag(cmd, &opts.force)
	addOutputFlag(cmd, &opts.output)
	return cmd
}

// fitMetrics reads --metric: coverage, nuclei_density or both,
// comma-separated, spelled as stored (kinetics.ParseMetric). An old
// spelling is refused naming the new one; domain_size is refused because
// it follows from the other two.
func fitMetrics(s string) (lab.Metrics, error) {
	var m lab.Metrics
	for _, part := range strings.Split(s, ",") {
		name, err := kinetics.ParseMetric(part)
		var ie *kinetics.InputError
		if errors.As(err, &ie) && ie.Reason == kinetics.ReasonRenamed {
			return m, onFlag(err)
		}
		switch name {
		case kinetics.MetricCoverage:
			m.Coverage = true
		case kinetics.MetricNucleiDensity:
			m.Density = true
		case kinetics.MetricDomainSize:
			return m, withHint(usagef("--metric %q: fit compares coverage and nuclei_density with the model, not domain_size", s),
				"domain_size follows from the other two; write --metric coverage,nuclei_density")
		default:
			return m, usagef("--metric %q: want coverage, nuclei_density or coverage,nuclei_density", s)
		}
	}
	return m, nil
}

// settings are the fit's settings from the flags: the metrics and the
// parameters held fixed.
func (opts *fitOptions) settings() (kinetics.FitSettings, error) {
	s := kinetics.FitSettings{Coverage: opts.metrics.Coverage, Density: opts.metrics.Density, Fixed: map[string]float64{}}
	for _, text := range opts.fix {
		key, v, err := kinetics.ParseFix(text)
		if err != nil {
			return s, onFlag(err)
		}
		s.Fixed[key] = v
	}
	for _, text := range opts.bounds {
		key, b, err := kinetics.ParseBound(text)
		if err != nil {
			return s, onFlag(err)
		}
		if s.Bounds == nil {
			s.Bounds = map[string][2]float64{}
		}
		s.Bounds[key] = b
	}
	return s, nil
}

// collect reads the fit's observations from the run log and says on
// stderr which furnaces the plans were rebuilt on and which runs were
// skipped.
func (opts *fitOptions) collect(ctx context.Context, start kinetics.Params) (lab.Observations, error) {
	l, err := opts.f.runLog(ctx)
	if err != nil {
		return lab.Observations{}, err
	}
	b, err := lab.NewRebuilder(l, opts.furnace)
	if err != nil {
		return lab.Observations{}, err
	}
	col, err := lab.Collect(ctx, b, store.Filter{Where: opts.where}, opts.metrics, start, opts.conds)
	if errors.Is(err, lab.ErrNoFurnace) {
		return lab.Observations{}, withHint(fmt.Errorf("fit: %w", err), "pass --furnace FILE")
	}
	if err != nil {
		return lab.Observations{}, fmt.Errorf("fit: %w", err)
	}
	if len(col.Derived) > 0 && !col.Stored {
		storeDerived(ctx, opts.f, col.Derived)
	}
	furnaceStatus(opts.f.io.Err, b, opts.furnace)
	for _, u := range col.Furnaces {
		fmt.Fprintf(opts.f.io.Err, "furnace %q from %s for %d runs\n", u.Name, u.Path, u.Runs)
		opts.inputs = append(opts.inputs, outfile.Input{What: "furnace file", Path: u.Path})
	}
	if col.Repeated > 0 {
		fmt.Fprintf(opts.f.io.Err, "%d runs have more than one measurement of a fitted metric; the fit uses each run's mean\n", col.Repeated)
	}
	for _, s := range col.Skipped {
		fmt.Fprintln(opts.f.io.Err, "skipped "+s.String())
	}
	return col, nil
}

// fitIterations is the iteration limit the progress bar counts to: the
// default of kinetics.FitSettings.MaxIterations, set explicitly so the two
// agree.
const fitIterations = 200

func fitRun(ctx context.Context, opts *fitOptions) error {
	settings, err := opts.settings()
	if err != nil {
		return err
	}
	start, err := loadParams(opts.params)
	if err != nil {
		return err
	}
	opts.inputs = []outfile.Input{{What: "params file", Path: opts.params}, {What: "furnace file", Path: opts.furnace}}
	for _, out := range []string{opts.outFile, opts.plot} {
		if err := checkOutput(out, opts.f.guard(opts.force, opts.inputs...)); err != nil {
			return err
		}
	}
	loadStart := time.Now()
	col, err := opts.collect(ctx, start)
	if err != nil {
		return err
	}
	load := time.Since(loadStart)
	obs := col.Observations
	bar := opts.f.io.progress("fitting")
	settings.MaxIterations = fitIterations
	settings.Progress = func(it int, _ float64) { bar.update(min(it, fitIterations), fitIterations) }
	fitStart := time.Now()
	res, err := kinetics.Fit(obs, start, settings)
	fitTime := time.Since(fitStart)
	bar.finish()
	if err != nil {
		return fitError(err)
	}
	res.Params.Date = opts.f.now().Format("2006-01-02")
	codes := make([]string, len(obs))
	for i, o := range obs {
		codes[i] = o.Label
	}
	shown := res
	if opts.output != formatJSON {
		// The table shows the worst few (the CSV none): round and label only those.
		cut := *res
		cut.Residuals = res.Residuals[:min(len(res.Residuals), shownResiduals)]
		shown = &cut
	}
	out := fitJSON(shown, codes)
	out.residualCount = len(res.Residuals)
	out.Seconds = fitSecondsJSON{Load: load.Seconds(), Fit: fitTime.Seconds()}
	out.addConditions(opts.conds, col)
	switch opts.output {
	case formatJSON:
		err = writeJSON(opts.f.io.Out, out)
	case formatCSV:
		err = writeCSV(opts.f.io.Out, estimateTable(out))
	default:
		err = printFit(opts.f.io.Out, out)
	}
	if err != nil {
		return err
	}
	return opts.writeFiles(res, codes)
}

// fitError is a fit the data or the settings refused, with what to do: the
// library's hint, with the flag that does it where one does.
func fitError(err error) error {
	var ie *kinetics.InputError
	switch {
	case !errors.As(err, &ie):
		return err
	case ie.Reason == kinetics.ReasonOneTemperature:
		return withHint(inputError(err), ie.Hint()+"; --fix NAME=VALUE holds a parameter fixed")
	case ie.Hint() != "":
		return inputError(err)
	case ie.Kind == kinetics.KindFix:
		return onFlag(err)
	}
	return withHint(inputError(err), "log outcomes with foilrun outcome add, or widen --where")
}

// writeFiles writes the parameter file (-o) and the parity plot (--plot)
// when asked for.
func (opts *fitOptions) writeFiles(res *kinetics.FitResult, codes []string) error {
	g := opts.f.guard(opts.force, opts.inputs...)
	if opts.outFile != "" {
		data := fitParamsFile(res.Params, codes)
		if _, err := kinetics.ParseParams(opts.outFile, data); err != nil {
			return fmt.Errorf("fit: the params file does not read back, so it is not written: %w", err)
		}
		if err := writeBytes(opts.outFile, g, data); err != nil {
			return fmt.Errorf("fit: write params: %w", err)
		}
		fmt.Fprintf(opts.f.io.Err, "wrote %s\n", opts.outFile)
	}
	if opts.plot != "" {
		if err := writeParity(opts.plot, g, res); err != nil {
			return err
		}
		fmt.Fprintf(opts.f.io.Err, "wrote %s\n", opts.plot)
	}
	return nil
}

// fitParamsFile is FormatParams with the run codes as comments (the
// loader ignores comments; Source names how many).
func fitParamsFile(p kinetics.Params, codes []string) []byte {
	var b strings.Builder
	b.Write(kinetics.FormatParams(p))
	b.WriteString("# fitted runs:\n")
	for i := 0; i < len(codes); i += 8 {
		b.WriteString("#   " + strings.Join(codes[i:min(i+8, len(codes))], ", ") + "\n")
	}
	return []byte(b.String())
}

type fitEstimateJSON struct {
	Parameter string   `json:"parameter"`
	Short     string   `json:"short"`
	Unit      string   `json:"unit"`
	Value     *float64 `json:"value,omitempty"`
	SE        *float64 `json:"se"`
	LogValue  *float64 `json:"ln_value,omitempty"`
	LogSE     *float64 `json:"ln_se,omitempty"`
	// RefValue is a prefactor's rate at the reference temperature and
	// RefFactor its ×/÷ uncertainty factor.
	RefValue     *float64 `json:"value_at_reference_temperature,omitempty"`
	RefFactor    *float64 `json:"factor_at_reference_temperature,omitempty"`
	Fixed        bool     `json:"fixed"`
	Identifiable bool     `json:"identifiable"`
	AtBound      bool     `json:"at_bound"`
}

type fitResidualJSON struct {
	Run       string  `json:"run"`
	Metric    string  `json:"metric"`
	Measured  float64 `json:"measured"`
	Predicted float64 `json:"predicted"`
	Unit      string  `json:"unit"`
	Residual  float64 `json:"residual"`
	Weighted  float64 `json:"weighted"`
	// Conditions the run's prediction used: "logged" or "planned".
	Conditions string `json:"conditions"`
}

type fitResultJSON struct {
	Status                string            `json:"status"`
	Iterations            int               `json:"iterations"`
	Runs                  []string          `json:"runs"`
	Conditions            string            `json:"conditions"`
	RunsLogged            int               `json:"runs_logged"`
	RunsPlanned           int               `json:"runs_planned"`
	Measurements          int               `json:"measurements"`
	FreeParameters        int               `json:"free_parameters"`
	RSS                   float64           `json:"rss"`
	ReducedChiSq          float64           `json:"reduced_chi_sq"`
	CoverageScale         float64           `json:"coverage_sigma_cloglog"`
	DensityScale          float64           `json:"density_sigma_ln"`
	Condition             float64           `json:"condition_number"`
	ReferenceTemperatureC float64           `json:"reference_temperature_c"`
	Estimates             []fitEstimateJSON `json:"estimates"`
	Combined              []fitCombinedJSON `json:"combined"`
	NucleationCorrelation *float64          `json:"corr_nucleation_energy_prefactor"`
	GrowthCorrelation     *float64          `json:"corr_growth_energy_prefactor"`
	Free                  []string          `json:"free"`
	Correlation           [][]*float64      `json:"correlation"`
	Residuals             []fitResidualJSON `json:"residuals"`
	Warnings              []string          `json:"warnings"`
	Method                string            `json:"method"`
	// Seconds is where the command's time went: reading the log into
	// observations, and the fit itself.
	Seconds fitSecondsJSON `json:"seconds"`
	// residualCount is len(Residuals) before the table's cut (see
	// shownResiduals).
	residualCount int
}

// fitSecondsJSON is fit's own timing, wall-clock seconds.
type fitSecondsJSON struct {
	Load float64 `json:"load"`
	Fit  float64 `json:"fit"`
}

func fitJSON(res *kinetics.FitResult, codes []string) fitResultJSON {
	out := fitResultJSON{Status: string(res.Status), Iterations: res.Iterations, Runs: codes, Measurements: res.N, FreeParameters: res.P,
		RSS: round6(res.RSS), ReducedChiSq: round6(res.ReducedChiSq), CoverageScale: round6(res.CoverageScale), DensityScale: round6(res.DensityScale),
		Condition: round6(res.Condition), NucleationCorrelation: opt6(res.NucleationCorrelation), GrowthCorrelation: opt6(res.GrowthCorrelation),
		Free: res.Free, Warnings: res.Warnings,
		Method: "Levenberg–Marquardt on cloglog coverage and ln nuclei density; covariance s²(JᵀJ)⁻¹"}
	if out.Warnings == nil {
		out.Warnings = []string{}
	}
	out.ReferenceTemperatureC = round6(recipe.Celsius(res.ReferenceTemperature))
	out.Estimates = estimatesJSON(res.Estimates)
	out.Combined = combinedJSON(res.Combined)
	for _, row := range res.Correlation {
		r := make([]*float64, len(row))
		for i, v := range row {
			r[i] = opt6(v)
		}
		out.Correlation = append(out.Correlation, r)
	}
	out.Residuals = make([]fitResidualJSON, 0, len(res.Residuals))
	for _, r := range res.Residuals {
		j := fitResidualJSON{Run: r.Label, Metric: r.Metric, Measured: round6(r.Measured), Predicted: round6(r.Predicted), Residual: round6(r.Raw), Weighted: round6(r.Weighted)}
		if r.Metric == "nuclei_density" {
			j.Measured, j.Predicted, j.Unit = round6(inUnit(r.Measured, "1/mm2")), round6(inUnit(r.Predicted, "1/mm2")), "1/mm2"
		} else {
			j.Unit = "1"
		}
		out.Residuals = append(out.Residuals, j)
	}
	return out
}

func estimateTable(r fitResultJSON) table {
	t := table{Header: []string{"parameter", "value", "se", "unit", "fixed"}, Numeric: []bool{false, true, true, false, false}}
	for _, e := range r.Estimates {
		if !e.Identifiable {
			t.add(e.Parameter+" ("+e.Short+")", "not identifiable", "", e.Unit, "no")
			continue
		}
		se := ""
		if e.SE != nil {
			se = num(*e.SE, 4)
		} else if !e.Fixed {
			se = "not identified"
		}
		fixed := "no"
		if e.Fixed {
			fixed, se = "yes", ""
		}
		t.add(e.Parameter+" ("+e.Short+")", num(*e.Value, 6), se, e.Unit, fixed)
	}
	return t
}

func corrText(v *float64) string {
	if v == nil {
		return "n/a"
	}
	return fixed(*v, 4)
}

// shownResiduals is how many residuals the table shows (worst first);
// --output csv|json lists them all.
const shownResiduals = 15

func printFit(w io.Writer, r fitResultJSON) error {
	fmt.Fprintf(w, "fit of %d runs: %d measurements, %d free parameters; %s after %d iterations\n", len(r.Runs), r.Measurements, r.FreeParameters, r.Status, r.Iterations)
	fmt.Fprintln(w, r.conditionsLine())
	heading(w, "Estimates")
	if err := writeTable(w, estimateTable(r)); err != nil {
		return err
	}
	if err := printReferred(w, r); err != nil {
		return err
	}
	heading(w, "Goodness of fit")
	g := table{Header: []string{"quantity", "value"}, Numeric: []bool{false, true}}
	g.add("RSS (weighted)", num(r.RSS, 5))
	g.add("reduced chi-square", num(r.ReducedChiSq, 4))
	g.add("n measurements", fmt.Sprint(r.Measurements))
	g.add("p free parameters", fmt.Sprint(r.FreeParameters))
	g.add("sigma coverage (cloglog)", num(r.CoverageScale, 4))
	g.add("sigma density (ln)", num(r.DensityScale, 4))
	g.add("condition of JtJ", num(r.Condition, 3))
	if err := writeTable(w, g); err != nil {
		return err
	}
	heading(w, "Residuals, worst first")
	t := table{Header: []string{"run", "metric", "measured", "predicted", "unit", "residual", "weighted", "conditions"}, Numeric: []bool{false, false, true, true, false, true, true, false}}
	for i, e := range r.Residuals {
		if i == shownResiduals {
			break
		}
		t.add(e.Run, e.Metric, num(e.Measured, 4), num(e.Predicted, 4), e.Unit, num(e.Residual, 3), num(e.Weighted, 3), e.Conditions)
	}
	if err := writeTable(w, t); err != nil {
		return err
	}
	if r.residualCount > shownResiduals {
		fmt.Fprintf(w, "the %d worst of %d residuals; --output csv or json lists all\n", shownResiduals, r.residualCount)
	}
	fmt.Fprintln(w, "residual: measured − predicted on the fit scale (cloglog coverage, ln density)")
	for _, s := range r.Warnings {
		fmt.Fprintln(w, "warning: "+s)
	}
	return nil
}

// writeParity draws measured against predicted, one panel per metric
// (coverage in %, nuclei density per mm²), with the line of equality,
// into path through the guard.
func writeParity(path string, g outfile.Guard, res *kinetics.FitResult) error {
	fig, ok := chart.FitParity(res.Residuals)
	if !ok {
		return nil
	}
	return writeOutput(path, g, func(w io.Writer) error { return chart.WriteParity(w, path, fig) })
}

// intervalJSON is a 90 % (or other level) interval in display units, shown
// by predict and window when the params file carries a covariance.
type intervalJSON struct {
	Level        float64    `json:"level"`
	Method       string     `json:"method"`
	Samples      int        `json:"samples"`
	Seed         uint64     `json:"seed"`
	Coverage     [2]float64 `json:"coverage"`
	NucleiPerMM2 [2]float64 `json:"nuclei_per_mm2"`
	DomainUm     [2]float64 `json:"domain_size_um"`
}

func toIntervalJSON(u kinetics.Uncertainty) *intervalJSON {
	return &intervalJSON{Level: u.Level, Method: u.Method, Samples: u.Samples, Seed: u.Seed,
		Coverage:     [2]float64{round6(u.Coverage.Lo), round6(u.Coverage.Hi)},
		NucleiPerMM2: [2]float64{round6(inUnit(u.NucleiDensity.Lo, "1/mm2")), round6(inUnit(u.NucleiDensity.Hi, "1/mm2"))},
		DomainUm:     [2]float64{round6(inUnit(u.DomainSize.Lo, "um")), round6(inUnit(u.DomainSize.Hi, "um"))}}
}

// predictInterval returns the 90 % interval of a plan's prediction when
// the parameters carry a covariance, nil otherwise.
func predictInterval(plan *recipe.Plan, p kinetics.Params) (*intervalJSON, error) {
	if !p.HasCovariance() {
		return nil, nil
	}
	u, err := kinetics.PredictInterval(kinetics.NewProfile(plan), p, kinetics.Options{}, kinetics.IntervalSettings{})
	if err != nil {
		return nil, err
	}
	return toIntervalJSON(u), nil
}

// printInterval prints an interval under the prediction table.
func printInterval(w io.Writer, iv *intervalJSON) {
	if iv == nil {
		return
	}
	fmt.Fprintf(w, "%.0f %% interval (parameter uncertainty): coverage %s–%s %%, nuclei density %s–%s per mm2, domain size %s–%s um\n",
		iv.Level*100, fixed(iv.Coverage[0]*100, 2), fixed(iv.Coverage[1]*100, 2), num(iv.NucleiPerMM2[0], 4), num(iv.NucleiPerMM2[1], 4),
		num(iv.DomainUm[0], 3), num(iv.DomainUm[1], 3))
	fmt.Fprintln(w, "interval method: "+iv.Method)
}

// windowIntervals returns each window point's interval (row-major, as the
// points are listed) when the parameters carry a covariance, nil
// otherwise.
func windowIntervals(plan *recipe.Plan, m *kinetics.Map, p kinetics.Params) ([]*intervalJSON, error) {
	if !p.HasCovariance() {
		return nil, nil
	}
	us, err := kinetics.WindowIntervals(plan, m, p, kinetics.Options{}, kinetics.IntervalSettings{Samples: 200})
	if err != nil {
		return nil, err
	}
	var out []*intervalJSON
	for _, row := range us {
		for _, u := range row {
			out = append(out, toIntervalJSON(u))
		}
	}
	return out, nil
}
