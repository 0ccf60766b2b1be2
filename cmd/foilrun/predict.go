package main

import (
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"github.com/spf13/cobra"

	"github.com/foilrun/foilrun/cmd/foilrun/internal/chart"
	"github.com/foilrun/foilrun/cmd/foilrun/internal/outfile"
	"github.com/foilrun/foilrun/kinetics"
	"github.com/foilrun/foilrun/recipe"
)

// modelFlags are the flags every kinetics command shares: --params,
// --output, --plot and --force.
type modelFlags struct {
	params string
	output outputFormat
	plot   string
	force  bool
}

func (m *modelFlags) register(cmd *cobra.Command, plotUsage string) {
	cmd.Flags().StringVar(&m.params, "params", "", "kinetics parameter file (default: illustrative parameters)")
	addOutputFlag(cmd, &m.output)
	cmd.Flags().StringVar(&m.plot, "plot", "", plotUsage)
	addForceFlag(cmd, &m.force)
}

// plotGuard is the guard of --plot: the plan's files and the params
// file are inputs.
func (m *modelFlags) plotGuard(f *factory, plan *recipe.Plan, site *recipe.Site) (outfile.Guard, error) {
	g := f.guard(m.force, append(planInputs(plan, site), outfile.Input{What: "params file", Path: m.params})...)
	return g, checkOutput(m.plot, g)
}

// check validates --plot (--output is checked as it is parsed).
func (m *modelFlags) check() error {
	if m.plot != "" {
		return checkPlotPath(m.plot)
	}
	return nil
}

type predictOptions struct {
	f      *factory
	recipe string
	flags  recipeFlags
	modelFlags
}

func newPredictCmd(f *factory) *cobra.Command {
	opts := &predictOptions{f: f}
	cmd := &cobra.Command{
		Use:   "predict RECIPE",
		Short: "Predict coverage, nuclei density and domain size for a recipe",
		Long: `Predict how graphene covers the foil during a recipe with a nucleation and
growth (Kolmogorov–Johnson–Mehl–Avrami) model: final coverage, nuclei density,
area-equivalent domain size, and the growth times to 50, 90 and 99 % coverage,
at the end and per step. Times count from the first step with methane.

The model's parameters come from --params FILE (YAML: nucleation_energy,
nucleation_prefactor, methane_order, hydrogen_order, growth_energy,
growth_prefactor, reference_pressure, and optionally shape, mode,
site_density). Without it the illustrative defaults are used: they show the
usual trends but are not a calibration of any furnace.

--plot FILE.png or FILE.svg draws the recipe profile (temperature and partial
pressures) and the predicted coverage and nuclei density against time.`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			opts.recipe = args[0]
			if err := opts.check(); err != nil {
				return err
			}
			return predictRun(opts)
		},
	}
	opts.flags.register(cmd)
	opts.modelFlags.register(cmd, "write plots of the profile and prediction to this .png or .svg file")
	return cmd
}

// loadParams reads --params, or returns the defaults.
func loadParams(path string) (kinetics.Params, error) {
	if path == "" {
		return kinetics.DefaultParams(), nil
	}
	return kinetics.LoadParams(path)
}

// round6 keeps 6 significant digits so JSON output is stable across
// platforms (fused multiply-add changes the last bits).
func round6(v float64) float64 {
	if v == 0 || math.IsNaN(v) || math.IsInf(v, 0) {
		return v
	}
	r, _ := strconv.ParseFloat(strconv.FormatFloat(v, 'g', 6, 64), 64)
	return r
}

func opt6(v float64) *float64 {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return nil
	}
	r := round6(v)
	return &r
}

// predictResult is the JSON form of `foilrun predict`, in display units.
type predictResult struct {
	Recipe       string `json:"recipe"`
	Furnace      string `json:"furnace"`
	ParamsSource string `json:"params_source"`
	// NotPredicted names the quantities the parameters cannot predict
	// (a coverage-only calibration: nuclei density and domain size).
	NotPredicted []string      `json:"not_predicted,omitempty"`
	Mode         string        `json:"mode"`
	Shape        string        `json:"shape"`
	Coverage     float64       `json:"coverage"`
	NucleiPerMM2 float64       `json:"nuclei_per_mm2"`
	DomainUm     float64       `json:"domain_size_um"`
	CarbonStart  *float64      `json:"carbon_start_min"`
	T50Min       *float64      `json:"t50_min"`
	T90Min       *float64      `json:"t90_min"`
	T99Min       *float64      `json:"t99_min"`
	Etching      bool          `json:"etching"`
	CheckErrors  int           `json:"check_errors"`
	Notes        []string      `json:"notes"`
	Steps        []predictStep `json:"steps"`
	Interval     *intervalJSON `json:"interval,omitempty"` // with a fitted params file (fit.go)
}

type predictStep struct {
	Step           int     `json:"step"`
	Label          string  `json:"label"`
	StartMin       float64 `json:"start_min"`
	DurationMin    float64 `json:"duration_min"`
	T0C            float64 `json:"t_start_c"`
	T1C            float64 `json:"t_end_c"`
	PCH4Pa         float64 `json:"p_ch4_pa"`
	PH2Pa          float64 `json:"p_h2_pa"`
	Carbon         bool    `json:"carbon"`
	Etching        bool    `json:"etching"`
	NucleationMM2S float64 `json:"nucleation_per_mm2_s"`
	GrowthUmMin    float64 `json:"growth_um_per_min"`
	Coverage       float64 `json:"coverage"`
	NucleiPerMM2   float64 `json:"nuclei_per_mm2"`
	DomainUm       float64 `json:"domain_size_um"`
}

func predictJSON(plan *recipe.Plan, res kinetics.Result, checkErrors int) predictResult {
	out := predictResult{
		Recipe: res.Recipe, Furnace: plan.Furnace.Name, ParamsSource: res.Params.Source, NotPredicted: notPredicted(res.Params),
		Mode: string(res.Mode), Shape: string(res.Shape),
		Coverage: round6(res.Coverage), NucleiPerMM2: round6(inUnit(res.NucleiDensity, "1/mm2")), DomainUm: round6(inUnit(res.DomainSize, "um")),
		CarbonStart: opt6(res.CarbonStart / 60), T50Min: opt6(res.T50 / 60), T90Min: opt6(res.T90 / 60), T99Min: opt6(res.T99 / 60),
		Etching: res.Etching, CheckErrors: checkErrors, Notes: res.Notes,
	}
	if out.Notes == nil {
		out.Notes = []string{}
	}
	for i, s := range res.Steps {
		out.Steps = append(out.Steps, predictStep{
			Step: i + 1, Label: s.Label, StartMin: round6(s.Start / 60), DurationMin: round6(s.Duration / 60),
			T0C: round6(s.T0 - 273.15), T1C: round6(s.T1 - 273.15), PCH4Pa: round6(s.PC), PH2Pa: round6(s.PH),
			Carbon: s.Carbon, Etching: s.Etching,
			NucleationMM2S: round6(inUnit(s.NucleationRate, "1/mm2/s")), GrowthUmMin: round6(inUnit(s.GrowthRate, "um/min")),
			Coverage: round6(s.Coverage), NucleiPerMM2: round6(inUnit(s.NucleiDensity, "1/mm2")), DomainUm: round6(inUnit(s.DomainSize, "um")),
		})
	}
	return out
}

func predictRun(opts *predictOptions) error {
	params, err := loadParams(opts.params)
	if err != nil {
		return err
	}
	plan, site, err := opts.flags.loadPlan(opts.recipe)
	if err != nil {
		return err
	}
	guard, err := opts.plotGuard(opts.f, plan, site)
	if err != nil {
		return err
	}
	errs := 0
	for _, fd := range recipe.Check(plan) {
		if fd.Severity == recipe.Error {
			errs++
		}
	}
	if errs > 0 {
		fmt.Fprintf(opts.f.io.Err, "foilrun: warning: the recipe has %d check errors; the prediction assumes it runs as written (see foilrun check)\n", errs)
	}
	pr := kinetics.Options{}
	if opts.plot != "" {
		pr.Samples = 4000 // enough points for the zoom on the steps with methane
	}
	res, err := kinetics.Predict(plan, params, pr)
	if err != nil {
		return err
	}
	out := predictJSON(plan, res, errs)
	if out.Interval, err = predictInterval(plan, params); err != nil {
		return err
	}
	w := opts.f.io.Out
	switch opts.output {
	case formatJSON:
		err = writeJSON(w, out)
	case formatCSV:
		err = writeCSV(w, predictStepTable(out.Steps))
	default:
		err = printPredict(w, out)
	}
	if err != nil {
		return err
	}
	if opts.plot != "" {
		fig := predictFigure(res)
		if err := writeOutput(opts.plot, guard, func(w io.Writer) error { return chart.WriteTimeFigure(w, opts.plot, fig) }); err != nil {
			return err
		}
		fmt.Fprintf(opts.f.io.Err, "wrote %s\n", opts.plot)
	}
	return nil
}

func minutes(v *float64) string {
	if v == nil {
		return "not reached"
	}
	return fixed(*v, 1)
}

func printPredict(w io.Writer, r predictResult) error {
	fmt.Fprintf(w, "recipe %q on furnace %q: %s nucleation, %s domains\n", r.Recipe, r.Furnace, r.Mode, r.Shape)
	fmt.Fprintf(w, "parameters: %s\n", r.ParamsSource)
	if len(r.NotPredicted) > 0 {
		fmt.Fprintf(w, "note: the parameters were calibrated on coverage only: coverage and times to coverage are predicted; %s are not (their columns come from held start values)\n", strings.Join(r.NotPredicted, " and "))
	}
	t := table{Header: []string{"quantity", "value"}, Numeric: []bool{false, true}}
	t.add("final coverage %", fixed(r.Coverage*100, 2))
	t.add("nuclei density per mm2", num(r.NucleiPerMM2, 4))
	t.add("domain size um", num(r.DomainUm, 3))
	t.add("t50 min", minutes(r.T50Min))
	t.add("t90 min", minutes(r.T90Min))
	t.add("t99 min", minutes(r.T99Min))
	heading(w, "Prediction")
	if err := writeTable(w, t); err != nil {
		return err
	}
	fmt.Fprintln(w, "times count from the first step with methane")
	printInterval(w, r.Interval)
	heading(w, "Per step")
	if err := writeTable(w, predictStepTable(r.Steps)); err != nil {
		return err
	}
	for _, n := range r.Notes {
		fmt.Fprintln(w, "note: "+n)
	}
	if r.Etching {
		fmt.Fprintln(w, "note: methane is below equilibrium with graphite in a step marked etching: no growth there")
	}
	return nil
}

func predictStepTable(steps []predictStep) table {
	t := table{
		Header:  []string{"step", "T C", "CH4 Pa", "H2 Pa", "nucleation /mm2/s", "growth um/min", "coverage %", "nuclei /mm2", "domain um"},
		Numeric: []bool{false, true, true, true, true, true, true, true, true},
	}
	for _, s := range steps {
		T := fixed(s.T0C, 0)
		if math.Abs(s.T1C-s.T0C) > 0.05 {
			T += "→" + fixed(s.T1C, 0)
		}
		label := s.Label
		if s.Etching {
			label += " [etching]"
		}
		rate, growth := "", ""
		if s.Carbon {
			rate, growth = num(s.NucleationMM2S, 3), num(s.GrowthUmMin, 3)
		}
		t.add(label, T, num(s.PCH4Pa, 3), num(s.PH2Pa, 3), rate, growth, fixed(s.Coverage*100, 2), num(s.NucleiPerMM2, 4), num(s.DomainUm, 3))
	}
	return t
}

// predictFigure turns a result with a curve into the plot: temperature,
// partial pressures (log when they spread over more than 100×), coverage
// and nuclei density against time, each over the whole run and zoomed on
// the steps with methane.
func predictFigure(res kinetics.Result) chart.TimeFigure {
	var ts, Tc, pc, ph []float64
	var steps []chart.Step
	for _, s := range res.Profile.Segments {
		for _, t := range []float64{s.Start, s.Start + s.Duration} {
			ts = append(ts, t/60)
			Tc = append(Tc, s.TemperatureAt(t-s.Start)-273.15)
			pc = append(pc, s.PC)
			ph = append(ph, s.PH)
		}
		steps = append(steps, chart.Step{Name: fmt.Sprintf("%d %s", s.Index+1, s.Kind),
			Start: s.Start / 60, End: (s.Start + s.Duration) / 60, Carbon: s.Carbon()})
	}
	var ct, cov, dens []float64
	for _, s := range res.Curve {
		ct = append(ct, s.Time/60)
		cov = append(cov, s.Coverage*100)
		dens = append(dens, inUnit(s.NucleiDensity, "1/mm2"))
	}
	return chart.TimeFigure{
		Title: res.Recipe + ": recipe profile and predicted growth", XLabel: "time from the recipe start (min)", Steps: steps,
		Rows: []chart.Row{
			{YLabel: "temperature (°C)", Series: []chart.Series{{Name: "temperature", X: ts, Y: Tc}}},
			{YLabel: "partial pressure (Pa)", AutoLog: true, Unit: "Pa", Series: []chart.Series{{Name: "CH4", X: ts, Y: pc}, {Name: "H2", X: ts, Y: ph}}},
			{YLabel: "coverage (%)", Range: [2]float64{0, 100}, Series: []chart.Series{{Name: "coverage", X: ct, Y: cov}}},
			{YLabel: "nuclei density (1/mm²)", Series: []chart.Series{{Name: "nuclei", X: ct, Y: dens}}},
		},
	}
}

// notPredicted names what a coverage-only calibration cannot predict.
func notPredicted(p kinetics.Params) []string {
	if !p.CoverageOnly {
		return nil
	}
	return []string{kinetics.MetricNucleiDensity, kinetics.MetricDomainSize}
}
