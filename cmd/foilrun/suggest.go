package main

import (
	"errors"
	"fmt"
	"io"
	"maps"
	"slices"
	"strings"

	"github.com/spf13/cobra"

	"github.com/foilrun/foilrun/cmd/foilrun/internal/outfile"
	"github.com/foilrun/foilrun/kinetics"
	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/recipe/infile"
)

type suggestOptions struct {
	f          *factory
	recipe     string
	flags      recipeFlags
	targets    []string
	vary       []string
	minimize   string
	params     string
	confidence float64
	outFile    string
	force      bool
	output     outputFormat
	// search margins
	allowWarnings bool
	mfcShare      string // fraction of full scale, e.g. 90%
	meltMargin    string // temperature difference, e.g. 10 K
}

func newSuggestCmd(f *factory) *cobra.Command {
	opts := &suggestOptions{f: f}
	cmd := &cobra.Command{
		Use:   "suggest RECIPE",
		Short: "Find the grow step that meets coverage and domain size targets at least cost",
		Long: `Search the recipe's first grow step for the cheapest settings whose predicted
outcome meets every --target, within the furnace's limits and with no error
from foilrun check. Targets name a metric as stored: coverage>=0.99 (or 99%),
domain_size>=40um, nuclei_density<=100/mm2. --vary lists what may change:
temperature, duration, pressure and gas flows such as CH4 or H2, each
optionally with a range (temperature=950C:1060C, CH4=2sccm:20sccm,
duration=1min:2h); default temperature,CH4,duration. --minimize time (the
grow step's duration, default) or methane (CH4 used in the grow step).

For every grid point of temperature and flows the grow step's duration is
solved for exactly; the grid is refined around the best point. Prints the
best few candidates with their predictions and margins to the limits;
-o FILE writes the recipe with the grow step changed (the rest of the file
kept as far as YAML allows). With --confidence 0.9 and a fitted --params
file, the lower bound of the 90 % interval (upper for <= targets) must meet
each target. Says plainly, and exits with status 2, when nothing in range
meets the targets, naming the limits that bind.`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			opts.recipe = args[0]
			if len(opts.targets) == 0 {
				return usagef("give at least one --target, e.g. --target coverage>=0.99")
			}
			if opts.minimize != kinetics.MinimizeTime && opts.minimize != kinetics.MinimizeMethane {
				return usagef("--minimize %q: want %s or %s", opts.minimize, kinetics.MinimizeTime, kinetics.MinimizeMethane)
			}
			if opts.confidence != 0 && (opts.confidence <= 0 || opts.confidence >= 1) {
				return usagef("--confidence %g: want a level between 0 and 1, e.g. 0.9", opts.confidence)
			}
			return suggestRun(opts)
		},
	}
	opts.flags.register(cmd)
	cmd.Flags().StringArrayVar(&opts.targets, "target", nil, "required outcome METRIC>=VALUE or METRIC<=VALUE, e.g. coverage>=99% or domain_size>=40um (repeatable)")
	cmd.Flags().StringSliceVar(&opts.vary, "vary", nil, "grow-step parameters to search: temperature, duration, pressure, gas symbols, with optional =FROM:TO ranges (default temperature,CH4,duration)")
	cmd.Flags().StringVar(&opts.minimize, "minimize", kinetics.MinimizeTime, "what to minimise: time (the grow step's duration) or methane")
	cmd.Flags().StringVar(&opts.params, "params", "", "kinetics parameter file (default: illustrative parameters)")
	cmd.Flags().Float64Var(&opts.confidence, "confidence", 0, "plan so the targets hold at this interval's bound (needs a fitted params file)")
	cmd.Flags().StringVarP(&opts.outFile, "output-file", "o", "", "write the changed recipe here")
	addForceFlag(cmd, &opts.force)
	cmd.Flags().BoolVar(&opts.allowWarnings, "allow-warnings", false, "also suggest recipes that foilrun check gives warnings")
	cmd.Flags().StringVar(&opts.mfcShare, "max-mfc-share", "90%", "highest flow searched, as a share of the line's MFC full scale")
	cmd.Flags().StringVar(&opts.meltMargin, "melt-margin", "10 K", "keep the temperature this far below copper's melting point less the thermocouple margin")
	addOutputFlag(cmd, &opts.output)
	return cmd
}

type suggestCandidateJSON struct {
	TemperatureC float64            `json:"temperature_c"`
	FlowsSCCM    map[string]float64 `json:"flows_sccm"`
	DurationMin  float64            `json:"duration_min"`
	MethaneSCC   float64            `json:"methane_scc"`
	Coverage     float64            `json:"coverage"`
	NucleiPerMM2 float64            `json:"nuclei_per_mm2"`
	DomainUm     float64            `json:"domain_size_um"`
	Bounds       []float64          `json:"target_values"`
	Margins      []kinetics.Margin  `json:"margins"` // Limit, Value, Bound, Unit, Margin
}

type suggestResultJSON struct {
	Recipe     string                 `json:"recipe"`
	Furnace    string                 `json:"furnace"`
	Step       string                 `json:"step"`
	Targets    []string               `json:"targets"`
	Minimize   string                 `json:"minimize"`
	Method     string                 `json:"method"`
	Met        bool                   `json:"met"`
	Changes    []kinetics.Change      `json:"changes"`
	Candidates []suggestCandidateJSON `json:"candidates"`
	Closest    *suggestCandidateJSON  `json:"closest,omitempty"`
	Binding    []string               `json:"binding,omitempty"`
	Evaluated  int                    `json:"evaluated"`
	Warnings   []string               `json:"check_warnings"`
}

func candidateJSON(c kinetics.Candidate, grow recipe.Step) suggestCandidateJSON {
	j := suggestCandidateJSON{TemperatureC: round6(recipe.Celsius(c.Temperature)), FlowsSCCM: map[string]float64{}, DurationMin: round6(inUnit(c.Duration, "min")),
		Coverage: round6(c.Coverage), NucleiPerMM2: round6(inUnit(c.NucleiDensity, "1/mm2")), DomainUm: round6(inUnit(c.DomainSize, "um")), Margins: c.Margins}
	for _, fl := range grow.Flows {
		j.FlowsSCCM[fl.Gas] = round6(inUnit(fl.Flow.SI, "sccm"))
	}
	for k, v := range c.Flows {
		j.FlowsSCCM[k] = round6(inUnit(v, "sccm"))
	}
	j.MethaneSCC = round6(j.FlowsSCCM["CH4"] * inUnit(c.Duration, "min"))
	for _, b := range c.Bounds {
		j.Bounds = append(j.Bounds, round6(b))
	}
	for i := range j.Margins {
		j.Margins[i].Value, j.Margins[i].Bound, j.Margins[i].Margin = round6(j.Margins[i].Value), round6(j.Margins[i].Bound), round6(j.Margins[i].Margin)
	}
	return j
}

func suggestRun(opts *suggestOptions) error {
	params, err := loadParams(opts.params)
	if err != nil {
		return err
	}
	plan, site, err := opts.flags.loadPlan(opts.recipe)
	if err != nil {
		return err
	}
	guard := opts.f.guard(opts.force, append(planInputs(plan, site), outfile.Input{What: "params file", Path: opts.params})...)
	if err := checkOutput(opts.outFile, guard); err != nil {
		return err
	}
	spec := kinetics.SuggestSpec{Params: params, Vary: opts.vary, Minimize: opts.minimize, Confidence: opts.confidence, AllowWarnings: opts.allowWarnings}
	if spec.MaxMFCShare, err = recipe.ParseFraction(opts.mfcShare); err != nil || !(spec.MaxMFCShare > 0 && spec.MaxMFCShare <= 1) {
		return withHint(usagef("--max-mfc-share %q: want a share of full scale above 0 and at most 100 %%", opts.mfcShare), "e.g. --max-mfc-share 90%")
	}
	q, err := recipe.Parse(opts.meltMargin, recipe.TemperatureDifference)
	if err != nil || q.SI < 0 {
		return withHint(usagef("--melt-margin %q: want a temperature difference of 0 K or more", opts.meltMargin), "e.g. --melt-margin 10K")
	}
	spec.MeltMargin = q.SI
	if q.SI == 0 {
		spec.MeltMargin = -1 // none asked for; 0 would mean the default
	}
	for _, s := range opts.targets {
		tg, err := kinetics.ParseTarget(s)
		if err != nil {
			return onFlag(err)
		}
		spec.Targets = append(spec.Targets, tg)
	}
	sug, err := kinetics.Suggest(plan, spec)
	if errors.Is(err, kinetics.ErrNoCovariance) {
		return withHint(inputError(err), "fit the parameters with foilrun fit -o params.yaml and pass --params params.yaml")
	}
	if err != nil {
		return onFlag(err)
	}
	out := suggestResult(plan, sug, opts.targets)
	var written []byte
	if sug.Met {
		if written, err = opts.changedRecipe(plan, sug, &out); err != nil {
			return err
		}
	}
	w := opts.f.io.Out
	switch opts.output {
	case formatJSON:
		err = writeJSON(w, out)
	case formatCSV:
		err = writeCSV(w, candidateTable(out.Candidates, spec.Targets))
	default:
		err = printSuggest(w, out, spec.Targets)
	}
	if err != nil {
		return err
	}
	if !sug.Met {
		return withHint(fmt.Errorf("suggest: no recipe within the search range meets %s; binding: %s", strings.Join(opts.targets, " and "), strings.Join(sug.Binding, "; ")),
			"relax the target, widen the --vary ranges, or vary more parameters (e.g. --vary temperature,CH4,H2,duration)")
	}
	if opts.outFile != "" {
		if err := writeBytes(opts.outFile, guard, written); err != nil {
			return fmt.Errorf("suggest: %w", err)
		}
		fmt.Fprintf(opts.f.io.Err, "wrote %s\n", opts.outFile)
	}
	return nil
}

// suggestResult is the JSON form of a suggestion, without the check
// warnings of the changed recipe (changedRecipe adds them).
func suggestResult(plan *recipe.Plan, sug *kinetics.Suggestion, targets []string) suggestResultJSON {
	grow := plan.Recipe.Steps[sug.Step]
	out := suggestResultJSON{Recipe: plan.Recipe.Name, Furnace: plan.Furnace.Name, Step: grow.Label(sug.Step), Targets: targets,
		Minimize: sug.Minimize, Method: sug.Method, Met: sug.Met, Changes: sug.Changes, Binding: sug.Binding, Evaluated: sug.Evaluated,
		Candidates: []suggestCandidateJSON{}, Warnings: []string{}}
	if out.Changes == nil {
		out.Changes = []kinetics.Change{}
	}
	for _, c := range sug.Candidates {
		out.Candidates = append(out.Candidates, candidateJSON(c, grow))
	}
	if sug.Closest != nil {
		c := candidateJSON(*sug.Closest, grow)
		out.Closest = &c
	}
	return out
}

// changedRecipe is the recipe file with the suggestion's grow step, checked
// on the plan's furnace: a check error fails the suggestion, warnings are
// added to out.
func (opts *suggestOptions) changedRecipe(plan *recipe.Plan, sug *kinetics.Suggestion, out *suggestResultJSON) ([]byte, error) {
	data, err := infile.ReadFile(opts.recipe, infile.Recipe)
	if err != nil {
		return nil, err
	}
	written, err := recipe.EditRecipe(data, recipe.Edit{Step: sug.Step, Changes: stepEdits(sug.Changes), From: opts.recipe, To: opts.outFile})
	if err != nil {
		return nil, fmt.Errorf("suggest: %w", err)
	}
	name := opts.outFile
	if name == "" {
		name = opts.recipe
	}
	r, err := recipe.ParseRecipe(name, written)
	if err != nil {
		return nil, fmt.Errorf("suggest: the changed recipe does not load: %w", err)
	}
	for _, fd := range recipe.Check(recipe.Derive(r, plan.Furnace)) {
		switch fd.Severity {
		case recipe.Error:
			return nil, fmt.Errorf("suggest: the changed recipe fails check: %s: %s", fd.Rule, fd.Message)
		case recipe.Warning:
			out.Warnings = append(out.Warnings, fd.StepName+": "+fd.Message)
		}
	}
	return written, nil
}

func candidateTable(cs []suggestCandidateJSON, targets []kinetics.Target) table {
	t := table{Header: []string{"rank", "T C", "flows sccm", "time min", "CH4 scc", "coverage %", "domain um", "nuclei /mm2"}}
	for _, tg := range targets {
		t.Header = append(t.Header, tg.Text)
	}
	t.Numeric = make([]bool, len(t.Header))
	for i := range t.Numeric {
		t.Numeric[i] = i != 2
	}
	for i, c := range cs {
		var fl []string
		for _, k := range slices.Sorted(maps.Keys(c.FlowsSCCM)) {
			fl = append(fl, k+" "+num(c.FlowsSCCM[k], 3))
		}
		row := []string{fmt.Sprint(i + 1), fixed(c.TemperatureC, 1), strings.Join(fl, ", "), fixed(c.DurationMin, 2), num(c.MethaneSCC, 4),
			fixed(c.Coverage*100, 2), num(c.DomainUm, 3), num(c.NucleiPerMM2, 4)}
		for j, b := range c.Bounds {
			row = append(row, targetText(targets[j], b))
		}
		t.add(row...)
	}
	return t
}

func targetText(tg kinetics.Target, v float64) string {
	switch tg.Quantity {
	case kinetics.MetricDomainSize:
		return num(inUnit(v, "um"), 4) + " um"
	case kinetics.MetricNucleiDensity:
		return num(inUnit(v, "1/mm2"), 4) + " /mm2"
	}
	return fixed(v*100, 3) + " %"
}

func printSuggest(w io.Writer, r suggestResultJSON, targets []kinetics.Target) error {
	fmt.Fprintf(w, "recipe %q on furnace %q, step %s: minimise %s; targets %s (%s)\n", r.Recipe, r.Furnace, r.Step, r.Minimize, strings.Join(r.Targets, ", "), r.Method)
	if !r.Met {
		fmt.Fprintln(w, "\nNo recipe within the search range meets the targets.")
		if r.Closest != nil {
			heading(w, "Closest point (at the longest time searched)")
			if err := writeTable(w, candidateTable([]suggestCandidateJSON{*r.Closest}, targets)); err != nil {
				return err
			}
		}
		fmt.Fprintln(w, "limits that bind: "+strings.Join(r.Binding, "; "))
		return nil
	}
	var ch []string
	for _, c := range r.Changes {
		ch = append(ch, c.Field+" "+c.Text)
	}
	fmt.Fprintf(w, "suggested: %s\n", strings.Join(ch, ", "))
	heading(w, "Best candidates")
	if err := writeTable(w, candidateTable(r.Candidates, targets)); err != nil {
		return err
	}
	heading(w, "Margins of the suggestion")
	t := table{Header: []string{"limit", "value", "limit value", "unit", "margin"}, Numeric: []bool{false, true, true, false, true}}
	for _, m := range r.Candidates[0].Margins {
		t.add(m.Limit, num(m.Value, 5), num(m.Bound, 5), m.Unit, num(m.Margin, 3))
	}
	if err := writeTable(w, t); err != nil {
		return err
	}
	fmt.Fprintf(w, "%d settings evaluated; the changed recipe passes foilrun check", r.Evaluated)
	if len(r.Warnings) > 0 {
		fmt.Fprintf(w, " with %d warnings:\n", len(r.Warnings))
		for _, s := range r.Warnings {
			fmt.Fprintln(w, "  warning: "+s)
		}
	} else {
		fmt.Fprintln(w, " without warnings")
	}
	return nil
}

// stepEdits turns the suggestion's changes into recipe edits: the value in
// SI, written with 5 significant digits for a temperature (0.1 K at
// 1000 °C), 3 for a flow and 4 for a duration.
func stepEdits(changes []kinetics.Change) []recipe.StepEdit {
	var out []recipe.StepEdit
	for _, c := range changes {
		e := recipe.StepEdit{Field: c.Field, SI: c.SI}
		if g, ok := strings.CutPrefix(c.Field, "flows."); ok {
			e.Field, e.Gas = recipe.EditFlow, g
		}
		switch e.Field {
		case recipe.EditTemperature:
			e.Digits = 5
		case recipe.EditFlow:
			e.Digits = 3
		default:
			e.Digits = 4
		}
		out = append(out, e)
	}
	return out
}
