package main

import (
	"context"
	"errors"
	"fmt"
	"io"

	"github.com/foilrun/foilrun/cmd/foilrun/internal/lab"
	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/store"
)

// rebuildRun rebuilds the plan of a logged run from its snapshots: on the
// furnace file given (an override, said on status), else on the furnace
// the run was logged with (see lab.Rebuilder).
func rebuildRun(ctx context.Context, l store.RunLog, rec store.RunRecord, furnace string, status io.Writer) (*lab.Rebuilt, error) {
	b, err := lab.NewRebuilder(l, furnace)
	if err != nil {
		return nil, err
	}
	rb, err := b.Rebuild(ctx, rec)
	switch {
	case errors.Is(err, lab.ErrNoSnapshot):
		return nil, withHint(err, "a run logged without a recipe cannot be matched to a furnace log")
	case errors.Is(err, lab.ErrNoFurnace):
		return nil, withHint(err, "pass --furnace FILE")
	case err != nil:
		return nil, err
	}
	furnaceStatus(status, b, furnace)
	return rb, nil
}

// furnaceStatus says on status which furnace an override replaced, and
// the notes of runs logged before the log kept furnace files.
func furnaceStatus(status io.Writer, b *lab.Rebuilder, override string) {
	if override != "" {
		fmt.Fprintf(status, "furnace %s given with --furnace overrides the furnace each run was logged with\n", override)
	}
	for _, n := range b.Notes() {
		fmt.Fprintln(status, "note: "+n)
	}
}

// hashNote is " (snapshot 0123456789ab)" for a run's furnace snapshot,
// "" for a run logged without one.
func hashNote(hash string) string {
	if hash == "" {
		return ""
	}
	return fmt.Sprintf(" (snapshot %.12s)", hash)
}

// printLoggedPlan prints, for run show, the checks of a logged run's
// recipe on the furnace it was logged with (or the override): where the
// furnace came from, the findings and the pressure each step's pump can
// hold. A run logged without a recipe has none; a run whose furnace
// cannot be found says so instead.
func printLoggedPlan(ctx context.Context, w, status io.Writer, l store.RunLog, rec store.RunRecord, furnace string) error {
	if rec.RecipeHash == "" {
		return nil
	}
	rb, err := rebuildRun(ctx, l, rec, furnace, status)
	if errors.Is(err, lab.ErrNoFurnace) {
		heading(w, "Checks of the recipe")
		fmt.Fprintf(w, "not checked: %v\n", err)
		return nil
	}
	if err != nil {
		return err
	}
	heading(w, "Checks of the recipe")
	fmt.Fprintf(w, "on furnace %q from %s\n", rb.Furnace.Name, rb.FurnacePath)
	findings := recipe.Check(rb.Plan)
	if len(findings) == 0 {
		fmt.Fprintln(w, "no findings")
	} else if err := writeTable(w, checkFindingsTable(findings)); err != nil {
		return err
	}
	t := table{Header: []string{"step", "P set Pa", "pump limit Pa"}, Numeric: []bool{false, true, true}}
	for _, s := range rb.Plan.Steps {
		t.add(s.Label, num(s.Pressure, 3), num(s.PumpLimit, 3))
	}
	return section(w, "Pressure the pump can hold per step", t)
}
