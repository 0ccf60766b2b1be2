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
	cmd.AddCommand(newOutcomeAddCmd(f), newOutcomeMetricsCmd(f))
	return cmd
}

type outcomeAddOptions struct {
	f        *factory
	code     string
	values   []string
	method   string
	measured string
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
	at := time.Now()
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
	l, err := o.f.runLog(ctx)
	if err != nil {
		return err
	}
	if err := l.AddOutcomes(ctx, o.code, os); err != nil {
		return err
	}
	fmt.Fprintf(o.f.io.Err, "run %s: %d outcomes added\n", o.code, len(os))
	return nil
}

func newOutcomeMetricsCmd(f *factory) *cobra.Command {
	var output string
	cmd := &cobra.Command{
		Use:   "metrics",
		Short: "List the known outcome metrics and their units",
		Args:  cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			if err := checkFormat(output); err != nil {
				return err
			}
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
			return render(f.io.Out, output, t, rows)
		},
	}
	cmd.Flags().StringVar(&output, "output", formatTable, "output format: table, csv or json")
	return cmd
}
