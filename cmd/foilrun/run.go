package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"maps"
	"os"
	"sort"
	"strings"
	"time"

	"github.com/spf13/cobra"

	"github.com/foilrun/foilrun/cmd/foilrun/internal/lab"
	"github.com/foilrun/foilrun/cmd/foilrun/internal/tabular"
	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/recipe/infile"
	"github.com/foilrun/foilrun/store"
	"github.com/foilrun/foilrun/store/furnacelog"
)

func newRunCmd(f *factory) *cobra.Command {
	cmd := &cobra.Command{
		Use:   "run",
		Short: "Log a furnace run: start, note, finish, add, show",
		Long: `Log furnace runs. "run start" stores the recipe as an immutable snapshot and
prints the new run's code; "run note" adds timestamped notes while it runs;
"run finish" ends it, optionally with the furnace controller's CSV log, whose
per-step actuals and deviations from plan are stored; "run add" logs a finished
run in one go; "run show" prints everything logged about a run.`,
	}
	cmd.AddCommand(newRunStartCmd(f), newRunNoteCmd(f), newRunFinishCmd(f), newRunAddCmd(f), newRunShowCmd(f))
	return cmd
}

// runOptions are the options shared by run start and run add.
type runOptions struct {
	f         *factory
	recipe    string
	flags     recipeFlags
	operator  string
	lot       string
	notes     []string
	log       string   // add: furnace log CSV
	outcomes  []string // add: metric=value[unit]
	aborted   bool     // add
	started   string   // add: start time
	startOnly bool
	logStart  int    // add: step the furnace log starts at (0: found from the log)
	override  string // log a recipe with check errors or safety stops anyway, for this reason
}

func (o *runOptions) register(cmd *cobra.Command) {
	o.flags.register(cmd)
	cmd.Flags().StringVar(&o.operator, "operator", "", "who runs the furnace (default $USER)")
	cmd.Flags().StringVar(&o.lot, "lot", "", "copper foil lot (default the recipe's substrate lot)")
	cmd.Flags().StringArrayVar(&o.notes, "note", nil, "a note on the run (repeatable)")
	cmd.Flags().StringVar(&o.override, "override", "", "log the run although the recipe has check errors or safety stops, for this reason (stored with the findings)")
}

func newRunStartCmd(f *factory) *cobra.Command {
	opts := &runOptions{f: f, startOnly: true}
	cmd := &cobra.Command{
		Use:   "start RECIPE",
		Short: "Start a run from a recipe and print its code",
		Long: `Start a run from a recipe: store the recipe as a snapshot and print the new
run's code. A recipe with check errors or stop-level safety findings is not
logged (the findings are printed, exit status 1) unless --override gives the
reason; the reason, the operator and the findings are then stored on the run.`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			opts.recipe = args[0]
			return runStartRun(cmd.Context(), opts)
		},
	}
	opts.register(cmd)
	return cmd
}

func newRunAddCmd(f *factory) *cobra.Command {
	opts := &runOptions{f: f}
	cmd := &cobra.Command{
		Use:   "add RECIPE",
		Short: "Log a finished run in one go (all or nothing)",
		Long: `Log a finished run in one go: the recipe snapshot, its outcomes and, with
--furnace-log, the controller's actuals. Prints the run's code, then any
deviations from plan the furnace log shows. A recipe with check errors or
stop-level safety findings is refused unless --override gives the reason.`,
		Example: `  foilrun run add growth.yaml --furnace-log run.csv --lot L-17 \
      --outcome coverage=93% --outcome domain_size=12um`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			opts.recipe = args[0]
			return runStartRun(cmd.Context(), opts)
		},
	}
	opts.register(cmd)
	cmd.Flags().StringVar(&opts.log, "furnace-log", "", "the furnace controller's CSV log of the run (a regular file of at most 1 GiB)")
	cmd.Flags().StringArrayVar(&opts.outcomes, "outcome", nil, "measured outcome metric=value[unit] (repeatable)")
	cmd.Flags().BoolVar(&opts.aborted, "aborted", false, "the run was aborted")
	cmd.Flags().StringVar(&opts.started, "started", "", "when the run started (RFC 3339, e.g. 2026-03-01T09:30:00Z; default now)")
	cmd.Flags().IntVar(&opts.logStart, "log-starts-at", 0, "recipe step (1-based) whose start is the furnace log's first row (default: found from the log)")
	return cmd
}

// runStartRun is run start and run add: it prints the new run's code and,
// for run add, the deviations from plan (both results, on stdout).
func runStartRun(ctx context.Context, o *runOptions) error {
	data, err := infile.ReadFile(o.recipe, infile.Recipe)
	if err != nil {
		return fmt.Errorf("load recipe: %w", err)
	}
	plan, site, err := o.flags.loadPlan(o.recipe)
	if err != nil {
		return err
	}
	now := o.f.now().UTC()
	rec := o.record(plan, now)
	rec.CodePrefix = site.CodePrefix(plan.Furnace.Name) // the site file's run_codes
	if !o.startOnly {
		if err := o.finished(&rec, plan, now); err != nil {
			return err
		}
	}
	if err := gate(plan, site, o.override, now, &rec, o.f.io.Out, o.f.io.Err); err != nil {
		return err
	}
	snap := store.NewSnapshot(plan.Recipe.Name, o.recipe, data)
	l, err := o.f.createLog(ctx)
	if err != nil {
		return err
	}
	furnaceSnap, siteSnap := lab.Snapshots(plan, site)
	code, err := l.CreateRun(ctx, rec, &snap, furnaceSnap, siteSnap)
	if err != nil {
		return err
	}
	storeRunProfile(ctx, l, snap.SHA256, plan, o.f.io.Err)
	fmt.Fprintln(o.f.io.Out, code)
	return printDeviations(o.f.io.Out, code, rec.Deviations)
}

// record is a running run of the plan, started now, with the operator,
// lot and notes of the flags.
func (o *runOptions) record(plan *recipe.Plan, now time.Time) store.RunRecord {
	rec := store.RunRecord{
		Run: store.Run{Status: store.Running, RecipeName: plan.Recipe.Name, Furnace: plan.Furnace.Name,
			Operator: o.operator, Lot: o.lot, Started: now},
		Params: plan.Parameters(),
	}
	if rec.Operator == "" {
		rec.Operator = os.Getenv("USER")
	}
	if rec.Lot == "" {
		rec.Lot = plan.Recipe.Substrate.Lot
	}
	for _, n := range o.notes {
		rec.Notes = append(rec.Notes, store.Note{At: now, Text: n})
	}
	return rec
}

// finished makes rec the finished run of run add: its status, start and
// end, outcomes measured now, and the furnace log's actuals and deviations.
func (o *runOptions) finished(rec *store.RunRecord, plan *recipe.Plan, now time.Time) error {
	rec.Status = store.Done
	if o.aborted {
		rec.Status = store.Aborted
	}
	if o.started != "" {
		t, err := time.Parse(time.RFC3339, o.started)
		if err != nil {
			return usagef("--started %q: want a time such as 2026-03-01T09:30:00Z", o.started)
		}
		rec.Started = t
	}
	rec.Ended = rec.Started.Add(time.Duration(plan.Total * float64(time.Second)))
	for _, s := range o.outcomes {
		oc, err := store.ParseOutcome(s, recipe.IsParameter)
		if err != nil {
			return err
		}
		oc.Measured = now
		rec.Outcomes = append(rec.Outcomes, oc)
	}
	if o.log == "" {
		return nil
	}
	res, att, err := readFurnaceLog(o.log, plan, o.logStart, o.f.io.Err)
	if err != nil {
		return err
	}
	rec.Actuals, rec.Deviations = res.Actuals, res.Deviations
	if twins := lab.LoggedParameters(plan, res.Actuals); twins != nil {
		if rec.Params == nil {
			rec.Params = map[string]float64{}
		}
		maps.Copy(rec.Params, twins)
	}
	rec.Attachments = append(rec.Attachments, att)
	rec.Ended = rec.Started.Add(time.Duration(res.Span * float64(time.Second)))
	return nil
}

// readFurnaceLog reads (through the bounded reader: a regular file of at
// most 1 GiB) and matches a controller log, starting at step startsAt or
// found from the log when 0, says on status which steps it covers, and
// describes the file as an attachment, hashed from the bytes read.
func readFurnaceLog(path string, plan *recipe.Plan, startsAt int, status io.Writer) (furnacelog.Result, store.Attachment, error) {
	if plan.Furnace.Log == nil {
		return furnacelog.Result{}, store.Attachment{}, withHint(fmt.Errorf("furnace %q has no controller_log mapping", plan.Furnace.Name),
			"add controller_log (time, temperature, pressure, flows: column and unit) to the furnace file")
	}
	fh, err := infile.Open(path, infile.FurnaceLog)
	if err != nil {
		return furnacelog.Result{}, store.Attachment{}, fmt.Errorf("furnace log: %w", err)
	}
	defer fh.Close()
	lg, err := furnacelog.Read(fh, path, plan.Furnace, furnacelog.ReadOptions{})
	if err != nil {
		return furnacelog.Result{}, store.Attachment{}, err
	}
	sum, err := fh.SHA256()
	if err != nil {
		return furnacelog.Result{}, store.Attachment{}, fmt.Errorf("furnace log: %w", err)
	}
	res, err := furnacelog.Match(plan, lg, furnacelog.MatchOptions{StartsAt: startsAt})
	if err != nil {
		if startsAt == 0 {
			err = withHint(err, "check the log and the furnace file's controller_log, or pass --log-starts-at STEP")
		}
		return furnacelog.Result{}, store.Attachment{}, err
	}
	fmt.Fprintf(status, "furnace log %s: %s\n", path, res.Coverage())
	return res, store.Attachment{Path: path, SHA256: sum, Kind: "furnace-log"}, nil
}

func printDeviations(w io.Writer, code string, devs []store.Deviation) error {
	if len(devs) == 0 {
		return nil
	}
	fmt.Fprintf(w, "run %s: %d deviations from plan\n", code, len(devs))
	if err := writeTable(w, deviationTable(devs)); err != nil {
		return err
	}
	for _, d := range devs {
		if furnacelog.IsError(d) { // a failed leak check: the run is logged, the exit status says so
			return errFindings
		}
	}
	return nil
}

func deviationTable(devs []store.Deviation) table {
	t := table{Header: []string{"step", "quantity", "deviation"}}
	for _, d := range devs {
		t.add(d.Label, d.Quantity, d.Message)
	}
	return t
}

type runNoteOptions struct {
	f          *factory
	code, text string
}

func newRunNoteCmd(f *factory) *cobra.Command {
	opts := &runNoteOptions{f: f}
	return &cobra.Command{
		Use:   "note CODE TEXT",
		Short: "Add a timestamped note to a run",
		Args:  cobra.ExactArgs(2),
		RunE: func(cmd *cobra.Command, args []string) error {
			opts.code, opts.text = args[0], args[1]
			if strings.TrimSpace(opts.text) == "" {
				return usagef("the note is empty")
			}
			return runNoteRun(cmd.Context(), opts)
		},
	}
}

func runNoteRun(ctx context.Context, o *runNoteOptions) error {
	l, err := o.f.writeLog(ctx)
	if err != nil {
		return err
	}
	if err := l.AddNote(ctx, o.code, store.Note{At: o.f.now(), Text: o.text}); err != nil {
		return err
	}
	fmt.Fprintf(o.f.io.Err, "run %s: note added\n", o.code)
	return nil
}

type runFinishOptions struct {
	f        *factory
	code     string
	log      string
	aborted  bool
	note     string
	flags    recipeFlags
	logStart int // step the furnace log starts at (0: found from the log)
}

func newRunFinishCmd(f *factory) *cobra.Command {
	opts := &runFinishOptions{f: f}
	cmd := &cobra.Command{
		Use:   "finish CODE",
		Short: "End a run, storing the furnace log's actuals and printing deviations",
		Args:  cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			opts.code = args[0]
			return runFinishRun(cmd.Context(), opts)
		},
	}
	cmd.Flags().StringVar(&opts.log, "furnace-log", "", "the furnace controller's CSV log of the run (a regular file of at most 1 GiB)")
	cmd.Flags().BoolVar(&opts.aborted, "aborted", false, "the run was aborted")
	cmd.Flags().StringVar(&opts.note, "note", "", "a closing note")
	cmd.Flags().StringVar(&opts.flags.furnace, "furnace", "", "furnace file for reading the log (default the one the recipe names)")
	cmd.Flags().IntVar(&opts.logStart, "log-starts-at", 0, "recipe step (1-based) whose start is the furnace log's first row (default: found from the log)")
	return cmd
}

func runFinishRun(ctx context.Context, o *runFinishOptions) error {
	l, err := o.f.writeLog(ctx)
	if err != nil {
		return err
	}
	rec, err := l.Record(ctx, o.code)
	if err != nil {
		return err
	}
	fin := store.Finish{Status: store.Done, Ended: o.f.now(), Note: o.note}
	if o.aborted {
		fin.Status = store.Aborted
	}
	if rec.Status.Finished() {
		return fmt.Errorf("run %q is already %s: %w", o.code, rec.Status, store.ErrConflict)
	}
	if o.log != "" {
		rb, err := rebuildRun(ctx, l, rec, o.flags.furnace, o.f.io.Err)
		if err != nil {
			return err
		}
		plan := rb.Plan
		res, a, err := readFurnaceLog(o.log, plan, o.logStart, o.f.io.Err)
		if err != nil {
			return err
		}
		fin.Actuals, fin.Deviations, fin.Attachments = res.Actuals, res.Deviations, []store.Attachment{a}
		fin.Params = lab.LoggedParameters(plan, res.Actuals)
	}
	if err := l.FinishRun(ctx, o.code, fin); err != nil {
		return err
	}
	fillProfiles(ctx, l, o.f.io.Err)
	fmt.Fprintf(o.f.io.Err, "run %s %s\n", o.code, fin.Status)
	return printDeviations(o.f.io.Out, o.code, fin.Deviations)
}

type runShowOptions struct {
	f       *factory
	code    string
	furnace string // --furnace: override the run's logged furnace
	history bool   // --history: the corrected measurements too
	output  outputFormat
}

func newRunShowCmd(f *factory) *cobra.Command {
	opts := &runShowOptions{f: f}
	cmd := &cobra.Command{
		Use:   "show CODE",
		Short: "Print everything logged about a run",
		Args:  cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			opts.code = args[0]
			return runShowRun(cmd.Context(), opts)
		},
	}
	cmd.Flags().StringVar(&opts.furnace, "furnace", "", "check the recipe on this furnace file instead of the one the run was logged with")
	cmd.Flags().BoolVar(&opts.history, "history", false, "list corrected measurements: who, when, old and new value")
	addOutputFlag(cmd, &opts.output)
	return cmd
}

func runShowRun(ctx context.Context, o *runShowOptions) error {
	l, err := o.f.runLog(ctx)
	if err != nil {
		return err
	}
	rec, err := recordOrRenamed(ctx, l, o.code, o.f.io.Err)
	if err != nil {
		return err
	}
	w := o.f.io.Out
	switch o.output {
	case formatJSON:
		return writeJSON(w, rec)
	case formatCSV:
		return writeCSV(w, paramTable(rec))
	}
	if err := printRun(w, rec); err != nil {
		return err
	}
	if o.history && len(rec.Corrections) > 0 {
		if err := section(w, "Corrected measurements", correctionTable(rec.Corrections)); err != nil {
			return err
		}
	}
	return printLoggedPlan(ctx, w, o.f.io.Err, l, rec, o.furnace)
}

// recordOrRenamed returns the run with the code, or, when no run has it,
// the one run an import renumbered from it (runs import --renumber). A
// note on stderr names the run a code was renumbered to.
func recordOrRenamed(ctx context.Context, l store.RunLog, code string, stderr io.Writer) (store.RunRecord, error) {
	rec, err := l.Record(ctx, code)
	if err != nil && !errors.Is(err, store.ErrNotFound) {
		return rec, err
	}
	renamed, rerr := l.Renamed(ctx, code)
	if rerr != nil {
		return rec, rerr
	}
	e := escapeControl
	switch {
	case err == nil && len(renamed) > 0:
		fmt.Fprintf(stderr, "note: %s is also the old code of %s, renumbered on import\n", e(code), e(strings.Join(renamed, ", ")))
		return rec, nil
	case err == nil || len(renamed) == 0:
		return rec, err
	case len(renamed) > 1:
		return rec, inputError(fmt.Errorf("run %s: no run has this code, and imports renumbered %d runs from it: %s: %w",
			e(code), len(renamed), e(strings.Join(renamed, ", ")), store.ErrNotFound))
	}
	fmt.Fprintf(stderr, "note: %s was renumbered to %s on import\n", e(code), e(renamed[0]))
	return l.Record(ctx, renamed[0])
}

// printRun prints a run for people: its header and parameters, then each
// section the log holds.
func printRun(w io.Writer, rec store.RunRecord) error {
	e := escapeControl
	fmt.Fprintf(w, "run %s  %s\n", e(rec.Code), e(string(rec.Status)))
	fmt.Fprintf(w, "recipe    %s (sha256 %.12s)\nfurnace   %s%s\noperator  %s\nfoil lot  %s\nstarted   %s\nended     %s\n",
		e(rec.RecipeName), e(rec.RecipeHash), e(rec.Furnace), hashNote(rec.FurnaceHash), e(rec.Operator), e(rec.Lot), when(rec.Started), when(rec.Ended))
	if rec.Source != "" {
		fmt.Fprintf(w, "source    %s\n", e(rec.Source))
	}
	if len(rec.Aliases) > 0 {
		fmt.Fprintf(w, "was       %s (renumbered on import)\n", e(strings.Join(rec.Aliases, ", ")))
	}
	if err := section(w, "Recipe parameters", paramTable(rec)); err != nil {
		return err
	}
	if o := rec.Override; o != nil {
		heading(w, "Override")
		fmt.Fprintf(w, "logged despite %d findings by %s at %s\nreason    %s\n", len(o.Findings), o.Operator, when(o.At), o.Reason)
		if err := writeTable(w, overrideTable(o)); err != nil {
			return err
		}
	}
	if len(rec.Outcomes) > 0 {
		if err := section(w, "Outcomes", outcomeTable(rec.Outcomes)); err != nil {
			return err
		}
		if err := printRepeated(w, rec.Outcomes); err != nil {
			return err
		}
	}
	if len(rec.Notes) > 0 {
		heading(w, "Notes")
		for _, n := range rec.Notes {
			fmt.Fprintf(w, "%s  %s\n", when(n.At), e(n.Text))
		}
	}
	if len(rec.Actuals) > 0 {
		if err := section(w, "Furnace log: actuals per step", actualTable(rec.Actuals)); err != nil {
			return err
		}
	}
	if len(rec.Deviations) > 0 {
		if err := section(w, "Deviations from plan", deviationTable(rec.Deviations)); err != nil {
			return err
		}
	}
	if len(rec.Attachments) > 0 {
		heading(w, "Attachments")
		for _, a := range rec.Attachments {
			fmt.Fprintf(w, "%s  %s  sha256 %.12s\n", e(a.Kind), e(a.Path), e(a.SHA256))
		}
	}
	return nil
}

// section prints a heading and a table under it.
func section(w io.Writer, title string, t table) error {
	heading(w, title)
	return writeTable(w, t)
}

func outcomeTable(ocs []store.Outcome) table {
	t := table{Header: []string{"metric", "value", "unit", "entered", "method", "measured"}, Numeric: []bool{false, true}}
	for _, oc := range ocs {
		t.add(oc.Metric, num(oc.Value, 4), oc.Unit, oc.Entered, oc.Method, when(oc.Measured))
	}
	return t
}

func paramTable(rec store.RunRecord) table {
	units := map[string]string{}
	for _, p := range recipe.ParameterNames() {
		units[p.Name] = p.Unit
	}
	names := make([]string, 0, len(rec.Params))
	for n := range rec.Params {
		names = append(names, n)
	}
	store.SortParams(names)
	t := table{Header: []string{"parameter", "value", "unit"}, Numeric: []bool{false, true, false}}
	for _, n := range names {
		t.add(n, num(rec.Params[n], 5), units[n])
	}
	return t
}

// actualTable shows actuals in lab units: °C, Torr, sccm, min.
func actualTable(as []store.Actual) table {
	t := table{Header: []string{"step", "quantity", "unit", "planned", "mean", "min", "max", "samples"},
		Numeric: []bool{false, false, false, true, true, true, true, true}}
	sort.SliceStable(as, func(i, j int) bool { return as[i].Step < as[j].Step })
	shown := map[string]string{"K": "°C", "Pa": "Torr", "mol/s": "sccm", "s": "min"}
	for _, a := range as {
		unit := a.Unit
		if u, ok := shown[a.Unit]; ok {
			unit = u
		}
		conv := func(v float64) float64 {
			if x, err := recipe.In(v, unit); err == nil {
				return x
			}
			return v // a unit recipe does not know, or no value
		}
		planned := ""
		if a.Planned.Valid() {
			planned = num(conv(float64(a.Planned)), 4)
		}
		t.add(a.Label, a.Quantity, unit, planned, num(conv(a.Mean), 4), num(conv(a.Min), 4), num(conv(a.Max), 4), fmt.Sprint(a.Samples))
	}
	return t
}

func when(t time.Time) string { return tabular.When(t) }
