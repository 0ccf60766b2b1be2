package main

import (
	"context"
	"fmt"
	"io"
	"sort"
	"strings"

	"github.com/spf13/cobra"

	"github.com/foilrun/foilrun/cmd/foilrun/internal/history"
	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/recipe/infile"
	"github.com/foilrun/foilrun/store"
)

// historyFlags are the flags of runs import that read a lab's own sheet.
type historyFlags struct {
	mapFile  string
	template string
	sheet    string
	furnace  string
	dryRun   bool
}

func (h *historyFlags) register(cmd *cobra.Command) {
	cmd.Flags().StringVar(&h.mapFile, "map", "", "MAP.yaml: which column of the sheet feeds which field")
	cmd.Flags().StringVar(&h.template, "recipe", "", "the template recipe each row's values are written into (with --map)")
	cmd.Flags().StringVar(&h.sheet, "sheet", "", "the XLSX sheet to read (default the first)")
	cmd.Flags().StringVar(&h.furnace, "furnace", "", "furnace file of the runs (default the one the template names)")
	cmd.Flags().BoolVar(&h.dryRun, "dry-run", false, "print what would be imported and import nothing")
}

// runsHistoryRun is runs import --map: the sheet's rows made runs and
// imported in one transaction, or shown with --dry-run.
func runsHistoryRun(ctx context.Context, o *runsImportOptions) error {
	h := o.history
	in, err := historyInput(o.file, h)
	if err != nil {
		return inputError(fmt.Errorf("import %q: %w", o.file, err))
	}
	// the log is opened only when a row names a furnace other than the
	// template's, and for the import itself: a dry run needs none
	in.FurnaceByName = func(name string) (history.Furnace, error) {
		l, err := o.f.runLog(ctx)
		if err != nil {
			return history.Furnace{}, err
		}
		return loggedFurnace(ctx, l, name)
	}
	res, err := history.Convert(in)
	if err != nil {
		return inputError(fmt.Errorf("import %q: %w", o.file, err))
	}
	if h.dryRun {
		return printDryRun(o.f.io.Out, in.Sheet, res)
	}
	l, err := o.f.createLog(ctx)
	if err != nil {
		return err
	}
	n, err := l.Import(ctx, bundleOf(res), nil)
	if err != nil {
		return fmt.Errorf("import %q (nothing was imported): %w", o.file, err)
	}
	fillProfiles(ctx, l, o.f.io.Err)
	fmt.Fprintf(o.f.io.Err, "%d runs imported from %s\n", n, o.file)
	if bad := withCheckErrors(res); bad > 0 {
		fmt.Fprintf(o.f.io.Err, "%d of them have recipes that fail check (imported as they happened); run show CODE lists the findings\n", bad)
	}
	return nil
}

// historyInput reads the map, the template, its furnace and the sheet.
func historyInput(file string, h historyFlags) (history.Input, error) {
	mapData, err := infile.ReadFile(h.mapFile, infile.Recipe) // a YAML file of the same size class
	if err != nil {
		return history.Input{}, fmt.Errorf("map: %w", err)
	}
	m, err := history.ParseMap(h.mapFile, mapData)
	if err != nil {
		return history.Input{}, err
	}
	tmpl, err := infile.ReadFile(h.template, infile.Recipe)
	if err != nil {
		return history.Input{}, fmt.Errorf("template: %w", err)
	}
	r, err := recipe.ParseRecipe(h.template, tmpl)
	if err != nil {
		return history.Input{}, fmt.Errorf("template: %w", err)
	}
	f, _, err := recipe.Resolve(r, h.furnace, "")
	if err != nil {
		return history.Input{}, err
	}
	fh, err := infile.Open(file, infile.Import)
	if err != nil {
		return history.Input{}, err
	}
	defer fh.Close()
	sh, err := history.ReadSheet(file, fh, h.sheet)
	if err != nil {
		return history.Input{}, err
	}
	return history.Input{Sheet: sh, Map: m, Template: tmpl, TemplateFile: h.template,
		Furnace: history.Furnace{Furnace: f, Snapshot: store.NewFileSnapshot(store.SnapshotFurnace, f.Name, f.File, f.Content)}}, nil
}

// loggedFurnace is the furnace snapshot of the newest run logged on the
// furnace with the name.
func loggedFurnace(ctx context.Context, l store.RunLog, name string) (history.Furnace, error) {
	runs, err := l.List(ctx, store.Filter{Where: []string{fmt.Sprintf("furnace = '%s'", strings.ReplaceAll(name, "'", ""))}})
	if err != nil {
		return history.Furnace{}, err
	}
	for i := len(runs) - 1; i >= 0; i-- {
		rec, err := l.Record(ctx, runs[i].Code)
		if err != nil || rec.FurnaceHash == "" {
			continue
		}
		snap, err := l.Snapshot(ctx, rec.FurnaceHash)
		if err != nil {
			return history.Furnace{}, err
		}
		f, err := recipe.ParseFurnace(snap.File, snap.Content)
		if err != nil {
			return history.Furnace{}, err
		}
		return history.Furnace{Furnace: f, Snapshot: snap}, nil
	}
	return history.Furnace{}, fmt.Errorf("furnace '%s' is not known to the log (no run logged on it with its furnace file); give its file with --furnace", name)
}

// bundleOf is the runs of a conversion with their recipe and furnace
// snapshots, each once.
func bundleOf(res *history.Result) store.Bundle {
	var b store.Bundle
	seen := map[string]bool{}
	for _, r := range res.Runs {
		for _, s := range []store.Snapshot{r.Recipe, r.Furnace} {
			if !seen[s.SHA256] {
				seen[s.SHA256] = true
				b.Snapshots = append(b.Snapshots, s)
			}
		}
		b.Runs = append(b.Runs, r.Record)
	}
	return b
}

func withCheckErrors(res *history.Result) int {
	n := 0
	for _, r := range res.Runs {
		if recipe.HasErrors(r.Findings) {
			n++
		}
	}
	return n
}

// dryRunRows is how many runs a dry run shows.
const dryRunRows = 5

// printDryRun shows what an import would add: what each column sets, the
// first runs with their parameters, and the counts.
func printDryRun(w io.Writer, sh *history.Sheet, res *history.Result) error {
	st := table{Header: []string{"column", "sets"}}
	for _, s := range res.Settings {
		st.add(s.Heading, s.Sets)
	}
	if err := section(w, "Columns", st); err != nil {
		return err
	}
	rt := table{Header: []string{"row", "code", "started", "T grow C", "grow min", "outcomes", "check"}}
	for i, r := range res.Runs {
		if i == dryRunRows {
			break
		}
		rec := r.Record
		var ocs []string
		for _, o := range rec.Outcomes {
			ocs = append(ocs, o.Metric+"="+num(o.Value, 4))
		}
		sort.Strings(ocs)
		code := rec.Code
		if code == "" {
			code = "(new)"
		}
		rt.add(strings.TrimPrefix(rec.Source[strings.LastIndex(rec.Source, "row "):], "row "), code, when(rec.Started),
			num(rec.Params["growth_temperature_c"], 5), num(rec.Params["growth_time_min"], 4), strings.Join(ocs, " "), checkWord(r.Findings))
	}
	if err := section(w, "First runs", rt); err != nil {
		return err
	}
	counts := map[string]int{}
	for _, r := range res.Runs {
		for _, o := range r.Record.Outcomes {
			counts[o.Metric]++
		}
	}
	var parts []string
	for m, n := range counts {
		parts = append(parts, fmt.Sprintf("%s %d", m, n))
	}
	sort.Strings(parts)
	fmt.Fprintf(w, "\n%d rows of %s would be imported as runs; measured: %s; %d recipes fail check (imported as they happened)\nnothing was imported (--dry-run)\n",
		len(res.Runs), sh.File, strings.Join(parts, ", "), withCheckErrors(res))
	return nil
}

func checkWord(fs []recipe.Finding) string {
	if recipe.HasErrors(fs) {
		return "errors"
	}
	return "ok"
}
