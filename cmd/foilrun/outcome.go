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
	f      *factory
	code   string
	flags  measureFlags
	output outputFormat
}

func newOutcomeMeasureCmd(f *factory) *cobra.Command {
	opts := &outcomeMeasureOptions{f: f}
	cmd := &cobra.Command{
		Use:   "measure CODE [--image FILE --pixel SIZE] [--transmittance T] [--raman RATIOS]",
		Short: "Measure outcomes from a micrograph, a transmittance or Raman ratios and store them with the run",
		Long: `Measure a run's graphene and store the results against the run, each with its
method: from a micrograph (coverage, nuclei density, domain size; the image is
attached by path and content hash), from transmittance at 550 nm (layer count)
and from Raman 2D/G and D/G ratios (with the classification printed).`,
		Example: `  foilrun outcome measure G26-0061 --image foil.png --pixel 0.5um --overlay foil-overlay.png
  foilrun outcome measure G26-0061 --transmittance 97.6% --raman 2d/g=2.3,d/g=0.05`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			opts.code = args[0]
			opts.flags.bareGraySet = cmd.Flags().Changed("bare-gray")
			if opts.flags.image == "" && opts.flags.transmittance == "" && opts.flags.raman == "" {
				return usagef("give --image, --transmittance and/or --raman")
			}
			return outcomeMeasureRun(cmd.Context(), opts)
		},
	}
	cmd.Flags().StringVar(&opts.flags.image, "image", "", "micrograph file (PNG, JPEG or TIFF)")
	opts.flags.registerImage(cmd)
	opts.flags.registerFilm(cmd)
	addOutputFlag(cmd, &opts.output)
	return cmd
}

func outcomeMeasureRun(ctx context.Context, o *outcomeMeasureOptions) error {
	var ms []measurement
	var lines []string
	var img *imageResult
	if o.flags.image != "" {
		res, m, err := o.flags.measureImage(o.f.io.Err)
		if err != nil {
			return err
		}
		img, ms = res, m
	}
	fm, fl, err := o.flags.measureFilm()
	if err != nil {
		return err
	}
	ms, lines = append(ms, fm...), fl
	l, err := o.f.writeLog(ctx)
	if err != nil {
		return err
	}
	if _, err := l.Record(ctx, o.code); err != nil {
		return err
	}
	now := o.f.now().UTC()
	var os []store.Outcome
	for _, m := range ms {
		os = append(os, store.Outcome{Metric: m.Metric, Value: m.Value, Unit: m.Unit, Entered: m.Text, Method: m.Method, Measured: now})
	}
	if err := l.AddOutcomes(ctx, o.code, os); err != nil {
		return err
	}
	if img != nil {
		if err := l.AddAttachment(ctx, o.code, store.Attachment{Path: img.File, SHA256: img.SHA256, Kind: "micrograph", Added: now}); err != nil {
			return err
		}
		if o.output == formatTable {
			fmt.Fprintf(o.f.io.Out, "%s: %s %d×%d, sha256 %s…, domains %s (%s)\n", img.File, img.Format, img.Width, img.Height, img.SHA256[:12], img.Polarity, img.Reason)
			for _, n := range img.Notes {
				lines = append(lines, "note: "+n)
			}
		}
	}
	fmt.Fprintf(o.f.io.Err, "run %s: %d outcomes stored\n", o.code, len(os))
	return printMeasurements(o.f.io.Out, o.output, ms, lines)
}
