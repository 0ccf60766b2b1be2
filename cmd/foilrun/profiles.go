package main

import (
	"context"
	"fmt"
	"io"

	"github.com/foilrun/foilrun/cmd/foilrun/internal/lab"
	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/store"
)

// storeRunProfile stores the kinetics profile of a run just logged on
// plan (recipe snapshot hash), which fit reads instead of the recipe. The
// run is logged whatever happens here, so a failure is a note on status,
// not an error: fit derives a missing profile.
func storeRunProfile(ctx context.Context, l store.RunLog, hash string, plan *recipe.Plan, status io.Writer) {
	if err := lab.StoreProfile(ctx, l, hash, plan); err != nil {
		profileNote(status, err)
	}
}

// fillProfiles stores the kinetics profiles the log lacks after runs were
// written (run finish, runs import); failures are notes, as in
// storeRunProfile.
func fillProfiles(ctx context.Context, l store.RunLog, status io.Writer) {
	_, failed, err := lab.FillProfiles(ctx, l, false)
	for _, f := range failed {
		fmt.Fprintf(status, "note: no kinetics profile stored for %s\n", f)
	}
	if err != nil {
		profileNote(status, err)
	}
}

func profileNote(status io.Writer, err error) {
	fmt.Fprintf(status, "note: the runs are logged, but their kinetics profiles were not stored (%v); fit derives them, db check --repair stores them\n", err)
}

// storeDerived stores the kinetics profiles a command that reads the log
// derived because the log lacked them (lab.Observations.Derived), through
// the log opened for writing; where the log takes no writes (a read-only
// file or role) status says so and the next fit derives them again.
func storeDerived(ctx context.Context, f *factory, derived []store.Profile) {
	l, err := f.writeLog(ctx)
	if err == nil {
		if ps, ok := l.(store.ProfileStore); ok {
			err = ps.PutProfiles(ctx, derived)
		}
	}
	if err != nil {
		fmt.Fprintf(f.io.Err, "note: %d kinetics profiles derived from the recipe snapshots were not stored (%v); db check --repair stores them\n", len(derived), err)
	}
}
