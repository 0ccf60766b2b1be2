package main

import (
	"errors"
	"io"

	"github.com/spf13/cobra"

	"github.com/foilrun/foilrun/cmd/foilrun/internal/outfile"
	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/store/postgres"
)

// Every file a command writes (-o, --plot, --overlay, db backup) goes
// through internal/outfile: to a temporary file beside the target, then
// renamed over it. The guard refuses a symbolic link, the command's own
// inputs, the run log, and an existing file without --force.

// forceUsage is the help of every command's --force.
const forceUsage = "replace an existing output file (never an input of the command or the run log)"

// addForceFlag registers --force.
func addForceFlag(cmd *cobra.Command, force *bool) {
	cmd.Flags().BoolVar(force, "force", false, forceUsage)
}

// guard is the guard of a command's outputs: the inputs given, and
// always the run log (the --db file, $FOILRUN_DB or the default, with
// SQLite's side files) whether or not the command opens it.
func (f *factory) guard(force bool, inputs ...outfile.Input) outfile.Guard {
	g := outfile.Guard{Force: force, Inputs: inputs}
	if path, err := f.dbPath(); err == nil && !postgres.IsURL(path) {
		for _, suffix := range []string{"", "-wal", "-shm", "-journal"} {
			g.Inputs = append(g.Inputs, outfile.Input{What: "run log", Path: path + suffix})
		}
	}
	return g
}

// planInputs are the files a plan was loaded from: recipe, furnace and,
// when there is one, site.
func planInputs(plan *recipe.Plan, site *recipe.Site) []outfile.Input {
	in := []outfile.Input{{What: "recipe", Path: plan.Recipe.File}, {What: "furnace file", Path: plan.Furnace.File}}
	if site != nil {
		in = append(in, outfile.Input{What: "site file", Path: site.File})
	}
	return in
}

// checkOutput refuses early, before long work, an output the guard would
// refuse at the end; "" (no output asked for) passes.
func checkOutput(path string, g outfile.Guard) error {
	if path == "" {
		return nil
	}
	return outputError(outfile.Check(path, g))
}

// writeOutput writes path through the guard: produce writes the content;
// on any failure the old file stays as it was.
func writeOutput(path string, g outfile.Guard, produce func(io.Writer) error) error {
	return outputError(outfile.Write(path, g, produce))
}

// writeBytes writes data to path through the guard.
func writeBytes(path string, g outfile.Guard, data []byte) error {
	return writeOutput(path, g, func(w io.Writer) error {
		_, err := w.Write(data)
		return err
	})
}

// outputError marks a refused target as a usage error (its hint comes
// from the refusal); other errors pass unchanged.
func outputError(err error) error {
	if errors.Is(err, outfile.ErrRefused) {
		return asUsage(err)
	}
	return err
}
