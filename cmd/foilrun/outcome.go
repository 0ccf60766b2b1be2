package main

import (
	"context"
	"fmt"
	"strings"
	"time"

	"github.com/spf13/cobra"

	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/store"
)

func newOutcomeCmd(f *factory) *cobra.Command {
	cmd := &cobra.Command{
		Use:   "outcome",
		Short: "Record measured outcomes of a run",
	}
	cmd.AddCommand(newOutcomeAddCmd(f), newOutcomeMeasureCmd(f), newOutcomeMetricsCmd(f))
	return cmd
}

type outcomeAddOptions struct {
	f        *factory
	code     string
	values   []string
	method   string
	measured string
	replace  bool // --replace: correct the logged values, keeping them in the run's history
	who      string
}

func newOutcomeAddCmd(f *factory) *cobra.Command {
	opts := &outcomeAddOptions{f: f}
	cmd := &cobra.Command{
		Use:   "add CODE metric=value[unit]...",
		Short: "Add measured outcomes to a run (all or none)",
		Long: `Add measured outcomes to a run. Known metrics and their units:
` + metricHelp() + `
Other metrics are free-form: give them a unit (e.g. peak_shift=3.5cm-1); a
metric keeps the unit it was first logged with.`,
		Example: `  foilrun outcome add G26-0012 coverage=93% nuclei_density=120/mm2 domain_size=15um`,
		Args:    cobra.MinimumNArgs(2),
		RunE: func(cmd *cobra.Command, args []string) error {
			opts.code, opts.values = args[0], args[1:]
			return outcomeAddRun(cmd.Context(), opts)
		},
	}
	cmd.Flags().StringVar(&opts.method, "method", "", "how they were measured, e.g. micrograph, raman, four-point probe")
	cmd.Flags().StringVar(&opts.measured, "measured", "", "when (RFC 3339; default now)")
	cmd.Flags().BoolVar(&opts.replace, "replace", false, "correct a mistaken entry: replace the run's values of each metric (run show --history lists the old ones)")
	cmd.Flags().StringVar(&opts.who, "operator", "", "who makes the correction (with --replace; default $USER)")
	return cmd
}

func metricHelp() string {
	var b strings.Builder
	for _, m := range store.Metrics() {
		fmt.Fprintf(&b, "  %-18s %-7s %s (units: %s)\n", m.Name, m.Unit, m.Description, strings.Join(m.Units(), " "))
	}
	return b.String()
}

func outcomeAddRun(ctx context.Context, o *outcomeAddOptions) error {
	at := o.f.now()
	if o.measured != "" {
		t, err := time.Parse(time.RFC3339, o.measured)
		if err != nil {
			return usagef("--measured %q: want a time such as 2026-03-01T09:30:00Z", o.measured)
		}
		at = t
	}
	var os []store.Outcome
	for _, v := range o.values {
		oc, err := store.ParseOutcome(v, recipe.IsParameter)
		if err != nil {
			return err
		}
		oc.Method, oc.Measured = o.method, at
		os = append(os, oc)
	}
	l, err := o.f.writeLog(ctx)
	if err != nil {
		return err
	}
	if o.replace {
		return replaceOutcomes(ctx, o, l, os)
	}
	if err := l.AddOutcomes(ctx, o.code, os); err != nil {
		return err
	}
	fmt.Fprintf(o.f.io.Err, "run %s: %d outcomes added\n", o.code, len(os))
	return nil
}

type outcomeMetricsOptions struct {
	f      *factory
	output outputFormat
}

func newOutcomeMetricsCmd(f *factory) *cobra.Command {
	opts := &outcomeMetricsOptions{f: f}
	cmd := &cobra.Command{
		Use:   "metrics",
		Short: "List the known outcome metrics and their units",
		Args:  cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			return outcomeMetricsRun(opts)
		},
	}
	addOutputFlag(cmd, &opts.output)
	return cmd
}

func outcomeMetricsRun(o *outcomeMetricsOptions) error {
	t := table{Header: []string{"metric", "unit", "better", "units accepted", "description"}}
	type row struct {
		Metric, Unit, Better, Description string
		Units                             []string
	}
	var rows []row
	for _, m := range store.Metrics() {
		better := "higher"
		if m.LowerBetter {
			better = "lower"
		}
		t.add(m.Name, m.Unit, better, strings.Join(m.Units(), " "), m.Description)
		rows = append(rows, row{m.Name, m.Unit, better, m.Description, m.Units()})
	}
	return render(o.f.io.Out, o.output, t, rows)
}

type outcomeMeasureOptions struct {
	f       *factory
	code    string
	flags   measureFlags
	params  string // --params: predicts the run's coverage when the polarity is not given
	furnace string // --furnace: overrides the recipe's furnace for that prediction
	output  outputFormat
}

func newOutcomeMeasureCmd(f *factory) *cobra.Command {
	opts := &outcomeMeasureOptions{f: f}
	cmd := &cobra.Command{
		Use:   "measure CODE [--image FILE... --pixel SIZE|--instrument NAME] [--transmittance T] [--raman RATIOS]",
		Short: "Measure outcomes from a micrograph, a transmittance or Raman ratios and store them with the run",
		Long: `Measure a run's graphene and store the results against the run, each with its
method: from micrographs (coverage, island density, domain size; each image is
attached by path and content hash), from transmittance at 550 nm (layer count)
and from Raman 2D/G and D/G ratios (with the classification printed).

A micrograph's polarity (domains darker or brighter than copper) must be known:
--polarity, an --instrument preset of the --site file (default: the site file
the run's recipe names), or a bare reference (--bare-gray, --bare-region).
Without any of them the run's predicted coverage may decide it (polarity_source
prediction): with a params file that has a covariance (--params, from foilrun
fit) when the whole 90 % interval lies below 35 % or above 65 %; with no
covariance (the illustrative defaults) only when the prediction itself lies
below 20 % or above 80 %. Otherwise nothing is stored: a guess never is.
Several --image flags
are fields of view of one run: each is stored, and so is their mean. The
island density is stored as nuclei_density only below --island-limit
coverage (default 30 %, where islands rarely merge), else as island_density.`,
		Example: `  foilrun outcome measure G26-0061 --image foil.png --pixel 0.5um --overlay foil-overlay.png
  foilrun outcome measure G26-0061 --image a.png --image b.png --instrument sem-1 --site site.yaml
  foilrun outcome measure G26-0061 --transmittance 97.6% --raman 2d/g=2.3,d/g=0.05`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			opts.code = args[0]
			opts.flags.bareGraySet = cmd.Flags().Changed("bare-gray")
			if len(opts.flags.images) == 0 && opts.flags.transmittance == "" && opts.flags.raman == "" {
				return usagef("give --image, --transmittance and/or --raman")
			}
			return outcomeMeasureRun(cmd.Context(), opts)
		},
	}
	cmd.Flags().StringArrayVar(&opts.flags.images, "image", nil, "micrograph file (PNG, JPEG or TIFF); repeat for several fields of view")
	opts.flags.registerImage(cmd)
	opts.flags.registerFilm(cmd)
	cmd.Flags().StringVar(&opts.params, "params", "", "kinetics parameter file that predicts the run's coverage when no polarity is given (default: illustrative parameters)")
	cmd.Flags().StringVar(&opts.furnace, "furnace", "", "furnace file for that prediction (default: the one the run's recipe names)")
	addOutputFlag(cmd, &opts.output)
	return cmd
}

func outcomeMeasureRun(ctx context.Context, o *outcomeMeasureOptions) error {
	if mf := &o.flags; len(mf.images) > 0 && (mf.instrument == "" || mf.site != "") {
		if _, err := mf.imageSettings(len(mf.images)); err != nil {
			return err // flag errors before the run log is opened
		}
	}
	l, err := o.f.writeLog(ctx)
	if err != nil {
		return err
	}
	rec, err := l.Record(ctx, o.code)
	if err != nil {
		return err
	}
	imgs, ms, err := o.measureImages(ctx, l, rec)
	if err != nil {
		return err
	}
	fm, lines, err := o.flags.measureFilm()
	if err != nil {
		return err
	}
	ms = append(ms, fm...)
	now := o.f.now().UTC()
	var os []store.Outcome
	for _, m := range ms {
		os = append(os, store.Outcome{Metric: m.Metric, Value: m.Value, Unit: m.Unit, Entered: m.Text, Method: m.Method, Measured: now})
	}
	if err := l.AddOutcomes(ctx, o.code, os); err != nil {
		return err
	}
	var head []string
	for _, img := range imgs {
		if err := l.AddAttachment(ctx, o.code, store.Attachment{Path: img.File, SHA256: img.SHA256, Kind: "micrograph", Added: now}); err != nil {
			return err
		}
		head = append(head, fmt.Sprintf("%s: %s %d×%d, sha256 %s…, domains %s (%s; polarity_source %s)", img.File, img.Format, img.Width, img.Height, img.SHA256[:12], img.Polarity, img.Reason, img.PolaritySource))
		for _, c := range img.Cuts {
			head = append(head, "  cut: "+c)
		}
		for _, n := range img.Notes {
			lines = append(lines, "note: "+n)
		}
	}
	if o.output == formatTable {
		for _, h := range head {
			fmt.Fprintln(o.f.io.Out, h)
		}
	}
	fmt.Fprintf(o.f.io.Err, "run %s: %d outcomes stored\n", o.code, len(os))
	return printMeasurements(o.f.io.Out, o.output, ms, lines)
}

// measureImages measures every --image of the run, refusing when the
// polarity would be a guess (after each image's input checks), and returns
// the results and the measurements of each field with their means. An
// --instrument without --site reads the site file the run's recipe names;
// with neither polarity nor preset the run's prediction may decide it.
func (o *outcomeMeasureOptions) measureImages(ctx context.Context, l store.RunLog, rec store.RunRecord) ([]*imageResult, []measurement, error) {
	mf := &o.flags
	if len(mf.images) == 0 {
		return nil, nil, nil
	}
	if len(mf.images) > 1 && mf.overlay != "" {
		return nil, nil, usagef("--overlay writes one file: give it with a single --image")
	}
	if mf.instrument != "" && mf.site == "" {
		site, err := recipeSite(ctx, l, rec)
		if err != nil {
			return nil, nil, err
		}
		mf.site = site
	}
	is, err := mf.imageSettings(len(mf.images))
	if err != nil {
		return nil, nil, err
	}
	var side predictedSide
	if is[0].source == sourceGuess {
		if side, err = o.predictSide(ctx, l, rec); err != nil {
			return nil, nil, err
		}
	}
	for _, s := range is {
		s.refuseGuess = true
		switch {
		case s.source != sourceGuess:
		case side.decides:
			s.source, s.predicted = sourcePrediction, &side
		default:
			s.undecided = side.reason
		}
	}
	var imgs []*imageResult
	var fields [][]measurement
	for i, path := range mf.images {
		res, m, err := mf.measureImage(o.f, path, is[i])
		if err != nil {
			return nil, nil, err
		}
		imgs, fields = append(imgs, res), append(fields, m)
	}
	return imgs, fieldMeans(fields, mf.images), nil
}
