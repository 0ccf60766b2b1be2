package main

import (
	"context"
	"encoding/csv"
	"fmt"
	"os"
	"path/filepath"
	"strconv"

	"github.com/foilrun/foilrun/cmd/foilrun/internal/benchdata/fitlog"
	"github.com/foilrun/foilrun/cmd/foilrun/internal/demolab"
	"github.com/foilrun/foilrun/cmd/foilrun/internal/lab"
	"github.com/foilrun/foilrun/kinetics"
	"github.com/foilrun/foilrun/store"
	"github.com/foilrun/foilrun/store/sqlite"
)

// fitRuns is the size of the fit benchmark log (issue 18: fit on 5,000
// logged runs).
const fitRuns = 5000

// writeFitLog lays the demo lab in dir and writes its fit benchmark log
// to dir/fit.db.
func writeFitLog(ctx context.Context, dir string) error {
	paths, err := demolab.Lay(dir)
	if err != nil {
		return err
	}
	db := filepath.Join(dir, "fit.db")
	l, err := sqlite.Open(ctx, db)
	if err != nil {
		return fmt.Errorf("open run log %q: %w", db, err)
	}
	defer l.Close()
	if err := fitlog.Write(ctx, l, paths, fitRuns); err != nil {
		return err
	}
	fmt.Fprintf(os.Stderr, "wrote %s: %d runs\n", db, fitRuns)
	return nil
}

// observationColumns are the CSV columns writeObservations writes (see
// kinetics.ClosedRun): the closed-form inputs, then the measured coverage
// and nuclei density (1/m², NaN when not measured).
var observationColumns = []string{"code", "u_per_eV", "ln_pc", "ln_ph", "ln_dp", "t_s", "kappa", "etch", "coverage", "nuclei_density_m2"}

// writeObservations writes the observations `foilrun fit` fits by default
// on the log at db (both metrics, logged conditions, the illustrative
// start's reference pressure and shape) to out as CSV. Every observation
// must have a closed form.
func writeObservations(ctx context.Context, db, out string) error {
	l, err := sqlite.Open(ctx, db)
	if err != nil {
		return fmt.Errorf("open run log %q: %w", db, err)
	}
	defer l.Close()
	b, err := lab.NewRebuilder(l, "")
	if err != nil {
		return err
	}
	col, err := lab.Collect(ctx, b, store.Filter{}, lab.Metrics{Coverage: true, Density: true}, kinetics.DefaultParams(), lab.Logged)
	if err != nil {
		return fmt.Errorf("collect the observations of %q: %w", db, err)
	}
	fh, err := os.Create(out)
	if err != nil {
		return err
	}
	w := csv.NewWriter(fh)
	w.Write(observationColumns)
	g := func(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }
	for _, o := range col.Observations {
		c, ok := o.Prepared.ClosedRun()
		if !ok {
			fh.Close()
			return fmt.Errorf("run %s has no closed form (a ramp with methane or several carbon steps): the reference cannot fit it", o.Label)
		}
		w.Write([]string{o.Label, g(c.U), g(c.LnPC), g(c.LnPH), g(c.LnDP), g(c.Duration), g(c.Kappa), strconv.FormatBool(c.Etch), g(o.Coverage), g(o.NucleiDensity)})
	}
	w.Flush()
	if err := w.Error(); err != nil {
		fh.Close()
		return fmt.Errorf("write %q: %w", out, err)
	}
	fmt.Fprintf(os.Stderr, "wrote %s: %d observations\n", out, len(col.Observations))
	return fh.Close()
}
