package main

import (
	"fmt"

	"github.com/spf13/cobra"

	"github.com/foilrun/foilrun/recipe/safety"
	"github.com/foilrun/foilrun/templates"
)

type checklistOptions struct {
	f       *factory
	recipe  string
	flags   recipeFlags
	format  string
	outFile string
	force   bool
}

func newChecklistCmd(f *factory) *cobra.Command {
	opts := &checklistOptions{f: f}
	cmd := &cobra.Command{
		Use:   "checklist RECIPE",
		Short: "Print the one-page pre-run gas-safety checklist of a recipe",
		Long: `Print a one-page checklist for a run of the recipe on its furnace in its site:
before the run (leak check and its pass figure, purge, detectors, exhaust,
people told), during (what to watch, what to do on an alarm), after (purge,
cool-down before opening), with a box per item, sign-off lines for the
operator and the person approving, the figures it relies on, and the site's
own rules and contacts. Stop-level findings are printed at the top and make
the exit status 1; the checklist is still written.

The checklist supports, and does not replace, the site's gas-safety review,
the local fire and compressed-gas codes, and the people licensed to approve
the set-up.`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			opts.recipe = args[0]
			if opts.format != templates.ChecklistText && opts.format != templates.ChecklistMarkdown {
				return usagef("--format %q: want text or markdown", opts.format)
			}
			return checklistRun(opts)
		},
	}
	opts.flags.register(cmd)
	cmd.Flags().StringVar(&opts.format, "format", templates.ChecklistText, "checklist format: text or markdown")
	cmd.Flags().StringVarP(&opts.outFile, "output-file", "o", "", "write the checklist to FILE instead of standard output")
	addForceFlag(cmd, &opts.force)
	return cmd
}

// renderChecklist executes the checklist template of a format with a sheet.
func renderChecklist(format string, sh safety.Sheet) ([]byte, error) {
	return templates.RenderChecklist(format, sh)
}

func checklistRun(opts *checklistOptions) error {
	plan, site, rep, err := analyzeRecipe(opts.recipe, opts.flags)
	if err != nil {
		return err
	}
	out, err := renderChecklist(opts.format, safety.NewSheet(plan, site, rep))
	if err != nil {
		return err
	}
	if opts.outFile != "" {
		if err := writeBytes(opts.outFile, opts.f.guard(opts.force, planInputs(plan, site)...), out); err != nil {
			return err
		}
		fmt.Fprintf(opts.f.io.Err, "checklist written to %s (%s)\n", opts.outFile, rep.Verdict)
	} else if _, err := opts.f.io.Out.Write(out); err != nil {
		return err
	}
	if safety.HasStop(rep.Findings) {
		if opts.outFile == "" {
			fmt.Fprintln(opts.f.io.Err, "foilrun: "+rep.Verdict)
		}
		return errFindings
	}
	return nil
}
