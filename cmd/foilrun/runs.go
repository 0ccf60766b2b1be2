package main

import (
	"bufio"
	"context"
	"errors"
	"fmt"
	"io"
	"math"
	"slices"
	"strconv"
	"strings"

	"github.com/spf13/cobra"

	"github.com/foilrun/foilrun/cmd/foilrun/internal/lab"
	"github.com/foilrun/foilrun/cmd/foilrun/internal/tabular"
	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/recipe/infile"
	"github.com/foilrun/foilrun/store"
)

// metricUsage is the --metric help of runs best and rank.
const metricUsage = "outcome metric as stored: coverage, nuclei_density, domain_size, or any other logged one"

func newRunsCmd(f *factory) *cobra.Command {
	cmd := &cobra.Command{
		Use:   "runs",
		Short: "Query the run log: list, best, rank, export, import",
		Long: `Query the run log. --where takes an expression over run columns (code,
status, recipe, furnace, operator, lot, started, ended), recipe parameters
(in the unit their name carries, e.g. growth_temperature_c) and outcome
metrics (in their canonical unit, e.g. coverage as a fraction, 0.9 for 90 %):

  growth_temperature_c >= 1000 and coverage > 0.9 or status = "done"

Comparisons = != < <= > >=, and, or, not, parentheses; text in quotes.
Repeated --where flags must all hold.`,
	}
	cmd.AddCommand(newRunsListCmd(f), newRunsBestCmd(f), newRunsRankCmd(f), newRunsExportCmd(f), newRunsImportCmd(f))
	return cmd
}

type runsListOptions struct {
	f      *factory
	where  []string
	limit  int
	output outputFormat
}

func newRunsListCmd(f *factory) *cobra.Command {
	opts := &runsListOptions{f: f}
	cmd := &cobra.Command{
		Use:   "list",
		Short: "List runs, optionally filtered",
		Args:  cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			return runsListRun(cmd.Context(), opts)
		},
	}
	cmd.Flags().StringArrayVar(&opts.where, "where", nil, "filter expression (repeatable; all must hold)")
	cmd.Flags().IntVar(&opts.limit, "limit", 0, "at most this many runs (0: all)")
	addOutputFlag(cmd, &opts.output)
	return cmd
}

func runsListRun(ctx context.Context, o *runsListOptions) error {
	l, err := o.f.runLog(ctx)
	if err != nil {
		return err
	}
	runs, err := l.List(ctx, store.Filter{Where: o.where, Limit: o.limit})
	if err != nil {
		return err
	}
	if o.output != formatTable {
		return tabular.WriteRuns(o.f.io.Out, runs, o.output == formatCSV)
	}
	if err := writeTable(o.f.io.Out, table{Header: tabular.RunHeader, Rows: tabular.RunRows(runs)}); err != nil {
		return err
	}
	fmt.Fprintf(o.f.io.Err, "%d runs\n", len(runs))
	return nil
}

// goalFlags are --min and --max of best and rank.
type goalFlags struct{ min, max string }

func (g *goalFlags) register(cmd *cobra.Command) {
	cmd.Flags().StringVar(&g.min, "min", "", "a run is good when the metric is at least this, in its canonical unit (fractions also as 30%)")
	cmd.Flags().StringVar(&g.max, "max", "", "a run is good when the metric is at most this (as --min)")
}

// goal reads --min and --max for metric: a number in the metric's
// canonical unit, or for a fraction (coverage, transmittance_550) also a
// percentage such as 30%.
func (g *goalFlags) goal(metric string) (store.Goal, error) {
	m, known := store.MetricByName(metric)
	fraction := known && slices.Contains(m.Units(), "%")
	out := store.NoGoal()
	for _, p := range []struct {
		flag, v string
		into    *store.Optional
	}{{"--min", g.min, &out.Min}, {"--max", g.max, &out.Max}} {
		if p.v == "" {
			continue
		}
		if fraction {
			x, err := recipe.ParseFraction(p.v)
			if err != nil {
				return out, usagef("%s: %v; want a fraction such as 0.9 or a percentage such as 90%%", p.flag, err)
			}
			*p.into = store.Optional(x)
			continue
		}
		x, err := strconv.ParseFloat(strings.TrimSpace(p.v), 64)
		if err != nil || math.IsNaN(x) || math.IsInf(x, 0) {
			unit := "its canonical unit"
			if known {
				unit = m.Unit
			}
			return out, usagef("%s %q: want a number in %s", p.flag, p.v, unit)
		}
		*p.into = store.Optional(x)
	}
	return out, nil
}

// conditionsFlag is --conditions of best and rank.
type conditionsFlag struct {
	text string
	src  lab.Source
}

func (c *conditionsFlag) register(cmd *cobra.Command) {
	cmd.Flags().StringVar(&c.text, "conditions", "logged",
		"derived parameters of: logged (a run's logged conditions where it was logged with a furnace log, else its plan) or planned")
}

// parse reads the flag's value, a usage error when it is neither logged
// nor planned.
func (c *conditionsFlag) parse() error {
	src, err := lab.ParseSource(c.text)
	if err != nil {
		return usagef("--%v", err)
	}
	c.src = src
	return nil
}

// metricFlag checks a --metric value: old spellings of the known metrics
// are refused naming the new one; any other name is left to checkNames.
func metricFlag(metric string) error {
	if _, known := store.MetricByName(metric); known {
		return nil
	}
	return oldSpelling("--metric", metric)
}

type runsBestOptions struct {
	f      *factory
	metric string
	by     []string
	bins   int
	goal   goalFlags
	conds  conditionsFlag
	where  []string
	output outputFormat
}

func newRunsBestCmd(f *factory) *cobra.Command {
	opts := &runsBestOptions{f: f}
	cmd := &cobra.Command{
		Use:     "best",
		Short:   "Which parameter ranges gave good results: runs binned by one or two parameters",
		Example: `  foilrun runs best --metric coverage --min 90% --by growth_temperature_c,ch4_flow_sccm --bins 5`,
		Args:    cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			if opts.metric == "" || len(opts.by) == 0 {
				return usagef("runs best needs --metric and --by")
			}
			if len(opts.by) > 2 {
				return usagef("--by %s: give one or two parameters", strings.Join(opts.by, ","))
			}
			if opts.bins < 1 || opts.bins > 100 {
				return usagef("--bins %d: want 1 to 100", opts.bins)
			}
			if err := metricFlag(opts.metric); err != nil {
				return err
			}
			if err := opts.conds.parse(); err != nil {
				return err
			}
			return runsBestRun(cmd.Context(), opts)
		},
	}
	cmd.Flags().StringVar(&opts.metric, "metric", "", metricUsage)
	cmd.Flags().StringSliceVar(&opts.by, "by", nil, "one or two recipe parameters, comma-separated")
	cmd.Flags().IntVar(&opts.bins, "bins", 5, "equal-width bins per parameter")
	cmd.Flags().StringArrayVar(&opts.where, "where", nil, "only runs matching this filter (repeatable)")
	opts.goal.register(cmd)
	opts.conds.register(cmd)
	addOutputFlag(cmd, &opts.output)
	return cmd
}

// checkNames makes sure the metric and parameters are known to the log.
func checkNames(ctx context.Context, l store.RunLog, metric string, params []string) error {
	names, err := l.Names(ctx)
	if err != nil {
		return err
	}
	kinds := map[string]string{}
	for _, n := range names {
		kinds[n.Name] = n.Kind
	}
	if kinds[metric] != store.NameMetric {
		return withHint(usagef("metric %q has no logged values", metric), "add outcomes with: foilrun outcome add CODE "+metric+"=VALUE")
	}
	for _, p := range params {
		if kinds[p] != store.NameParam {
			return withHint(usagef("parameter %q has no logged values", p), "see the names in: foilrun run show CODE")
		}
	}
	return nil
}

type bestJSON struct {
	Metric      string    `json:"metric"`
	Params      []string  `json:"params"`
	Goal        string    `json:"goal"`
	Conditions  string    `json:"conditions"`
	RunsLogged  int       `json:"runs_on_logged_conditions"`
	RunsPlanned int       `json:"runs_on_plan"`
	Runs        int       `json:"runs"`
	Missing     int       `json:"runs_missing_a_parameter"`
	Bins        []binJSON `json:"bins"`
}

type binJSON struct {
	Lo, Hi  []float64
	Count   int      `json:"count"`
	Mean    float64  `json:"mean"`
	Min     float64  `json:"min"`
	Max     float64  `json:"max"`
	Meeting int      `json:"meeting"`
	Share   *float64 `json:"share"`
}

func runsBestRun(ctx context.Context, o *runsBestOptions) error {
	goal, err := o.goal.goal(o.metric)
	if err != nil {
		return err
	}
	l, err := o.f.runLog(ctx)
	if err != nil {
		return err
	}
	if err := checkNames(ctx, l, o.metric, o.by); err != nil {
		return err
	}
	cols, pk, err := columns(ctx, l, o.where, o.metric, o.by, o.conds.src)
	if err != nil {
		return err
	}
	bt := store.BestColumns(o.metric, o.by, cols.Metric, cols.Params, o.bins, goal)
	t := table{}
	for _, p := range o.by {
		t.Header = append(t.Header, p)
		t.Numeric = append(t.Numeric, false)
	}
	share := "share " + goal.String()
	t.Header = append(t.Header, "runs", "mean", "min", "max", share)
	t.Numeric = append(t.Numeric, true, true, true, true, true)
	js := bestJSON{Metric: bt.Metric, Params: bt.Params, Goal: goal.String(), Conditions: o.conds.src.String(),
		RunsLogged: pk.Logged, RunsPlanned: pk.Planned, Runs: bt.Runs, Missing: bt.Missing, Bins: []binJSON{}}
	for _, b := range bt.Bins {
		var cells []string
		for j := range o.by {
			cells = append(cells, num(b.Lo[j], 4)+" – "+num(b.Hi[j], 4))
		}
		sh := ""
		if !math.IsNaN(b.Share) {
			sh = fixed(100*b.Share, 0) + " %"
		}
		t.add(append(cells, fmt.Sprint(b.Count), num(b.Mean, 3), num(b.Min, 3), num(b.Max, 3), sh)...)
		js.Bins = append(js.Bins, binJSON{Lo: b.Lo, Hi: b.Hi, Count: b.Count, Mean: b.Mean, Min: b.Min, Max: b.Max, Meeting: b.Meeting, Share: optional(b.Share)})
	}
	if err := render(o.f.io.Out, o.output, t, js); err != nil {
		return err
	}
	if o.output == formatTable {
		fmt.Fprintf(o.f.io.Err, "%s over %d runs (%d without the parameters left out); %s\n", o.metric, bt.Runs, bt.Missing, pk.Line())
	}
	return nil
}

// columns reads the metric and params of the runs that pass the filter
// for best and rank, each parameter on conditions src: with logged
// conditions its logged twin where the run has one (lab.Pick's rule,
// picked by the store), and says how many runs used which.
func columns(ctx context.Context, l store.RunLog, where []string, metric string, params []string, src lab.Source) (store.Columns, lab.Picked, error) {
	cq := store.ColumnQuery{Filter: store.Filter{Where: where}, Metric: metric, Params: params}
	if src == lab.Logged {
		cq.Twins = make([]string, len(params))
		for i, p := range params {
			cq.Twins[i] = p + lab.LoggedSuffix
		}
	}
	c, err := l.Columns(ctx, cq)
	if err != nil {
		return c, lab.Picked{}, err
	}
	return c, lab.Picked{Logged: c.Logged, Planned: len(c.Metric) - c.Logged, PerParam: c.PerParam}, nil
}

type runsRankOptions struct {
	f      *factory
	metric string
	goal   goalFlags
	conds  conditionsFlag
	where  []string
	output outputFormat
}

func newRunsRankCmd(f *factory) *cobra.Command {
	opts := &runsRankOptions{f: f}
	cmd := &cobra.Command{
		Use:   "rank",
		Short: "Rank recipe parameters by Spearman rank correlation with a metric",
		Long: `Rank every recipe parameter by Spearman's rank correlation with the metric
(ties get average ranks), with the number of runs and the parameter's range
among the good runs against the rest. Good runs meet --min/--max; without
them, the best quartile (the top one, or the bottom one for metrics where
lower is better: nuclei_density, raman_d_g, sheet_resistance). With
--conditions logged (the default) a run logged with a furnace log is ranked
by its logged twins (growth_temperature_c_logged, …), counted per parameter
in the logged column; --conditions planned ranks every run by its plan.`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			if opts.metric == "" {
				return usagef("runs rank needs --metric")
			}
			if err := metricFlag(opts.metric); err != nil {
				return err
			}
			if err := opts.conds.parse(); err != nil {
				return err
			}
			return runsRankRun(cmd.Context(), opts)
		},
	}
	cmd.Flags().StringVar(&opts.metric, "metric", "", metricUsage)
	cmd.Flags().StringArrayVar(&opts.where, "where", nil, "only runs matching this filter (repeatable)")
	opts.goal.register(cmd)
	opts.conds.register(cmd)
	addOutputFlag(cmd, &opts.output)
	return cmd
}

type rankJSON struct {
	Param   string   `json:"param"`
	Rho     *float64 `json:"rho"`
	N       int      `json:"n"`
	Logged  int      `json:"n_logged"` // of N, runs whose value is the logged twin
	Good    int      `json:"good"`
	GoodMin *float64 `json:"good_min"`
	GoodMax *float64 `json:"good_max"`
	RestMin *float64 `json:"rest_min"`
	RestMax *float64 `json:"rest_max"`
}

func runsRankRun(ctx context.Context, o *runsRankOptions) error {
	goal, err := o.goal.goal(o.metric)
	if err != nil {
		return err
	}
	l, err := o.f.runLog(ctx)
	if err != nil {
		return err
	}
	if err := checkNames(ctx, l, o.metric, nil); err != nil {
		return err
	}
	names, err := l.Names(ctx)
	if err != nil {
		return err
	}
	var params []string
	for _, n := range names {
		if n.Kind == store.NameParam && !lab.IsTwin(n.Name) {
			params = append(params, n.Name)
		}
	}
	store.SortParams(params)
	cols, pk, err := columns(ctx, l, o.where, o.metric, params, o.conds.src)
	if err != nil {
		return err
	}
	logged := map[string]int{}
	for i, p := range params {
		logged[p] = pk.PerParam[i]
	}
	m, _ := store.MetricByName(o.metric)
	res := store.RankColumns(o.metric, params, cols.Metric, cols.Params, goal, m.LowerBetter)
	t := table{Header: []string{"parameter", "rho", "runs", "logged", "good", "good range", "rest range"}, Numeric: []bool{false, true, true, true, true, false, false}}
	js := []rankJSON{}
	rng := func(lo, hi float64) string {
		if math.IsNaN(lo) {
			return ""
		}
		return num(lo, 4) + " – " + num(hi, 4)
	}
	for _, r := range res.Rows {
		t.add(r.Param, fixed(r.Rho, 3), fmt.Sprint(r.N), fmt.Sprint(logged[r.Param]), fmt.Sprint(r.Good), rng(r.GoodMin, r.GoodMax), rng(r.RestMin, r.RestMax))
		js = append(js, rankJSON{r.Param, optional(r.Rho), r.N, logged[r.Param], r.Good, optional(r.GoodMin), optional(r.GoodMax), optional(r.RestMin), optional(r.RestMax)})
	}
	if err := render(o.f.io.Out, o.output, t, js); err != nil {
		return err
	}
	if o.output == formatTable {
		fmt.Fprintf(o.f.io.Err, "%s: good means %s; %d runs; %s\n", o.metric, res.Goal, len(cols.Metric), pk.Line())
	}
	return nil
}

type runsExportOptions struct {
	f      *factory
	format string
	file   string
	force  bool
	where  []string
}

func newRunsExportCmd(f *factory) *cobra.Command {
	opts := &runsExportOptions{f: f}
	cmd := &cobra.Command{
		Use:   "export",
		Short: "Write runs as JSON (complete) or CSV (one row per run)",
		Args:  cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			if opts.format != formatCSV && opts.format != formatJSON {
				return usagef("--format %q: want csv or json", opts.format)
			}
			return runsExportRun(cmd.Context(), opts)
		},
	}
	cmd.Flags().StringVar(&opts.format, "format", formatJSON, "csv or json")
	cmd.Flags().StringVarP(&opts.file, "output-file", "o", "", "write to this file (default standard output)")
	addForceFlag(cmd, &opts.force)
	cmd.Flags().StringArrayVar(&opts.where, "where", nil, "only runs matching this filter (repeatable)")
	return cmd
}

// runsExportRun writes the export to standard output or, with -o,
// through the guard: a filter the log refuses, or a write that fails,
// leaves an existing file as it was.
func runsExportRun(ctx context.Context, o *runsExportOptions) error {
	g := o.f.guard(o.force)
	if err := checkOutput(o.file, g); err != nil {
		return err
	}
	l, err := o.f.runLog(ctx)
	if err != nil {
		return err
	}
	var n int
	export := func(w io.Writer) error {
		bw := bufio.NewWriter(w)
		f := store.Filter{Where: o.where}
		var err error
		if o.format == formatCSV {
			n, err = store.WriteCSV(ctx, bw, l, f)
		} else {
			n, err = store.WriteJSON(ctx, bw, l, f)
		}
		if err != nil {
			return err
		}
		return bw.Flush()
	}
	if o.file == "" {
		err = export(o.f.io.Out)
	} else {
		err = writeOutput(o.file, g, export)
	}
	if err != nil {
		return err
	}
	fmt.Fprintf(o.f.io.Err, "%d runs exported\n", n)
	return nil
}

type runsImportOptions struct {
	f        *factory
	format   string
	file     string
	renumber bool         // --renumber: new codes for codes already in the log
	history  historyFlags // --map and the flags that go with it
}

func newRunsImportCmd(f *factory) *cobra.Command {
	opts := &runsImportOptions{f: f}
	cmd := &cobra.Command{
		Use:   "import FILE",
		Short: "Add runs from a JSON or CSV export, or from a lab's own sheet with --map; all or nothing",
		Long: `Add runs to the log, all or nothing. Without --map, FILE is an export of a
run log (runs export, --format json or csv). With --map, FILE is the lab's own
sheet of past runs (CSV, or XLSX with --sheet NAME): every row becomes a run
whose recipe is the --recipe template with the row's values written in, as
MAP.yaml says which column feeds which field (see the README, "Bring your
past runs"). --dry-run shows what would be imported. --renumber merges an
export of another log whose codes clash with this one's: a run whose code is
taken gets the next free code of its prefix and year, and run show finds it
by its old code too. FILE must be a regular file of at most 1 GiB.`,
		Example: `  foilrun runs import runs.xlsx --sheet 2025 --recipe growth.yaml --map map.yaml --dry-run
  foilrun runs import other-lab.json --renumber`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			opts.file = args[0]
			if opts.history.mapFile != "" {
				if opts.renumber {
					return usagef("--renumber is for a run-log export (runs export); a sheet read with --map gets new codes unless its map names a code column")
				}
				if cmd.Flags().Changed("format") {
					return usagef("--format is for a run-log export; a sheet read with --map is CSV or XLSX by its name")
				}
				if opts.history.template == "" {
					return usagef("--map needs --recipe TEMPLATE.yaml, the recipe each row's values are written into")
				}
				return runsHistoryRun(cmd.Context(), opts)
			}
			for _, name := range []string{"recipe", "sheet", "dry-run", "furnace"} {
				if cmd.Flags().Changed(name) {
					return usagef("--%s is for importing a lab's sheet: give --map MAP.yaml too", name)
				}
			}
			if opts.format != formatCSV && opts.format != formatJSON {
				return usagef("--format %q: want csv or json", opts.format)
			}
			return runsImportRun(cmd.Context(), opts)
		},
	}
	cmd.Flags().StringVar(&opts.format, "format", formatJSON, "csv or json")
	cmd.Flags().BoolVar(&opts.renumber, "renumber", false, "give runs whose code is already in the log new codes, keeping the old one as an alias")
	opts.history.register(cmd)
	return cmd
}

func runsImportRun(ctx context.Context, o *runsImportOptions) error {
	fh, err := infile.Open(o.file, infile.Import)
	if err != nil {
		return fmt.Errorf("import: %w", err)
	}
	defer fh.Close()
	var b store.Bundle
	if o.format == formatCSV {
		b, err = store.ReadCSV(bufio.NewReader(fh))
	} else {
		b, err = store.ReadJSON(bufio.NewReader(fh))
	}
	if err != nil {
		return fmt.Errorf("import %q: %w", o.file, err)
	}
	l, err := o.f.createLog(ctx)
	if err != nil {
		return err
	}
	b.Renumber = o.renumber
	n, err := l.Import(ctx, b, nil)
	if err != nil {
		err = fmt.Errorf("import %q (nothing was imported): %w", o.file, err)
		if errors.Is(err, store.ErrConflict) && !o.renumber {
			err = withHint(err, "to merge another log whose codes clash with this one's, add --renumber")
		}
		return err
	}
	fillProfiles(ctx, l, o.f.io.Err)
	fmt.Fprintf(o.f.io.Err, "%d runs imported\n", n)
	return nil
}
