package main

import (
	"fmt"
	"io"
	"strconv"

	"github.com/spf13/cobra"

	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/recipe/safety"
)

type safetyOptions struct {
	f      *factory
	recipe string
	flags  recipeFlags
	output outputFormat
}

func newSafetyCmd(f *factory) *cobra.Command {
	opts := &safetyOptions{f: f}
	cmd := &cobra.Command{
		Use:   "safety RECIPE",
		Short: "Flag hydrogen, methane and inert-gas hazards of a recipe in its room",
		Long: `Analyse a recipe on its furnace in its site: flammable limits of each step's
feed (Le Chatelier), the exhaust's fuel against its inert dilution, a leak of
each line at MFC full scale (and the site's max_release) into the room with
the time to each detector alarm, the oxygen left after an inert leak, and the
purges, leak check and temperatures around the flammable gas. Exit status 1
when any finding is at the stop level.

The figures support, and do not replace, the site's gas-safety review, the
local fire and compressed-gas codes, and the people licensed to approve the
set-up.`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			opts.recipe = args[0]
			return safetyRun(opts)
		},
	}
	opts.flags.register(cmd)
	addOutputFlag(cmd, &opts.output)
	return cmd
}

// analyzeRecipe loads a recipe with its furnace and site and runs the
// safety analysis; a missing site is an input error with a hint.
func analyzeRecipe(path string, flags recipeFlags) (*recipe.Plan, *recipe.Site, *safety.Report, error) {
	plan, site, err := flags.loadPlan(path)
	if err != nil {
		return nil, nil, nil, err
	}
	if site == nil {
		return nil, nil, nil, withHint(fmt.Errorf("recipe %q names no site file: %w: %w", path, safety.ErrNoSite, recipe.ErrInvalid),
			"add \"site: site.yaml\" to the recipe or pass --site; foilrun new site writes a template")
	}
	rep, err := safety.Analyze(plan, site, safety.Options{})
	if err != nil {
		return nil, nil, nil, err
	}
	return plan, site, rep, nil
}

func safetyRun(opts *safetyOptions) error {
	_, _, rep, err := analyzeRecipe(opts.recipe, opts.flags)
	if err != nil {
		return err
	}
	w := opts.f.io.Out
	switch opts.output {
	case formatJSON:
		err = writeJSON(w, rep)
	case formatCSV:
		err = writeCSV(w, findingsTable(rep.Findings, false))
	default:
		err = printSafety(w, rep)
	}
	if err != nil {
		return err
	}
	if safety.HasStop(rep.Findings) {
		return errFindings
	}
	return nil
}

// findingsTable lays out safety findings; for people the action goes
// under the message, for CSV into its own column.
func findingsTable(fs []safety.Finding, human bool) table {
	t := table{Header: []string{"severity", "step", "rule", "finding", "action"}}
	if human {
		t.Header = t.Header[:4]
	}
	for _, f := range fs {
		step := f.StepName
		if step == "" {
			step = "run"
			if human {
				step = "run/site"
			}
		}
		if human {
			t.add(f.Severity.String(), step, f.Rule, f.Message+"\n→ "+f.Action)
		} else {
			t.add(f.Severity.String(), strconv.Itoa(f.Step), f.Rule, f.Message, f.Action)
		}
	}
	return t
}

func printSafety(w io.Writer, rep *safety.Report) error {
	fmt.Fprintf(w, "recipe %q on furnace %q in site %q; limits from %s\n", rep.Recipe, rep.Furnace, rep.Site, rep.Compilation)
	fmt.Fprintln(w, rep.Disclaimer)
	heading(w, "Findings")
	if err := writeTable(w, findingsTable(rep.Findings, true)); err != nil {
		return err
	}
	fmt.Fprintf(w, "\n%s\n", rep.Verdict)
	fmt.Fprintf(w, "Site rules to follow: %s\n", rep.GasCode)
	return nil
}
