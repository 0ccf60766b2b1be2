package lab

import (
	"context"
	"errors"
	"fmt"
	"math"
	"strconv"

	"github.com/foilrun/foilrun/kinetics"
	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/store"
)

// Metrics chooses the measured metrics a fit uses; a run counts when it
// has at least one of the chosen ones.
type Metrics struct {
	Coverage bool // "coverage", a fraction
	Density  bool // "nuclei_density", stored per mm²
}

// Skip is a run left out of a fit, and why.
type Skip struct {
	Code   string
	Reason string
}

// String is "CODE: reason".
func (s Skip) String() string { return s.Code + ": " + s.Reason }

// Observations is what Collect found in the run log.
type Observations struct {
	// Observations are the runs to fit, oldest first, labelled by run
	// code, with measured values in SI and NaN where not measured.
	Observations []kinetics.Observation
	// Skipped are the runs with a chosen metric that cannot be fitted:
	// those logged without a recipe snapshot, then those whose profile
	// cannot be prepared.
	Skipped []Skip
	// Furnaces are the furnace files the plans were rebuilt on.
	Furnaces []FurnaceUse
	// Repeated counts the fitted runs with more than one measurement of a
	// chosen metric (their mean is fitted).
	Repeated int
	// Logged[i] reports whether Observations[i] was prepared on the run's
	// logged conditions (else on its plan).
	Logged []bool
	// Derived are the profiles Collect derived because the log held none
	// of this ProfileVersion for a run's recipe and furnace; Stored
	// reports whether it stored them (false when the log is read-only: a
	// caller may store them through a log opened for writing).
	Derived []store.Profile
	Stored  bool
}

// Counts returns how many observations were prepared on logged
// conditions and how many on the plan.
func (o Observations) Counts() (logged, planned int) {
	for _, l := range o.Logged {
		if l {
			logged++
		}
	}
	return logged, len(o.Logged) - logged
}

// Collect reads the runs that pass filter, keeps those with a measured
// coverage and/or nuclei density as chosen (the mean of the run's
// measurements, converted to SI by recipe from the unit stored beside
// each), and prepares each run's kinetics profile with the fit's start
// parameters: with src Logged on the run's logged conditions where its
// furnace log gave actuals (LoggedPlan, from the plan rebuilt with b), else
// on the profile of its plan stored in the log (ProfileVersion, keyed by
// the recipe snapshot and the furnace b's rule chooses), parsing no
// recipe; a run without a stored profile has its plan rebuilt with b and
// its profile derived (CarbonProfile, which prepares identically), and
// Collect stores those profiles when the log takes writes (Derived,
// Stored). A run whose plan cannot be rebuilt for want of a snapshot is
// skipped; any other failure to rebuild one (a missing furnace, a bad
// snapshot) is returned as an error.
func Collect(ctx context.Context, b *Rebuilder, filter store.Filter, m Metrics, start kinetics.Params, src Source) (Observations, error) {
	var out Observations
	type run struct {
		obs      kinetics.Observation
		prof     kinetics.Profile
		shared   string // the key of the plan's own profile, prepared once; "" when logged
		repeated bool
	}
	var runs []run
	c := newProfiles(b)
	err := readRuns(ctx, b.log, filter, m, c.key(), func(rec store.RunRecord, data []byte) error {
		o, repeated, err := observation(rec, m)
		if err != nil || math.IsNaN(o.Coverage) && math.IsNaN(o.NucleiDensity) {
			return err
		}
		if rec.RecipeHash == "" {
			out.Skipped = append(out.Skipped, Skip{Code: rec.Code, Reason: ErrNoSnapshot.Error()})
			return nil
		}
		key, prof, logged, err := c.profile(ctx, rec, data, src)
		if err != nil {
			return err
		}
		if logged {
			runs = append(runs, run{obs: o, prof: prof})
			return nil
		}
		runs = append(runs, run{obs: o, prof: prof, shared: key, repeated: repeated})
		return nil
	})
	if err != nil {
		return Observations{}, err
	}
	type prepared struct {
		pr  *kinetics.Prepared
		err error
	}
	shared := map[string]prepared{} // a Prepared is read-only once made
	for _, r := range runs {
		p, ok := shared[r.shared]
		if !ok || r.shared == "" {
			p.pr, p.err = kinetics.Prepare(r.prof, start, kinetics.Options{})
			if r.shared != "" {
				shared[r.shared] = p
			}
		}
		if p.err != nil {
			out.Skipped = append(out.Skipped, Skip{Code: r.obs.Label, Reason: p.err.Error()})
			continue
		}
		r.obs.Prepared = p.pr
		out.Observations = append(out.Observations, r.obs)
		out.Logged = append(out.Logged, r.shared == "")
		if r.repeated {
			out.Repeated++
		}
	}
	out.Derived = c.derived
	if err := c.store(ctx); err == nil {
		out.Stored = len(c.derived) > 0
	} else if !errors.Is(err, store.ErrReadOnly) {
		return Observations{}, err
	}
	out.Furnaces = b.Used()
	return out, nil
}

// observation is a run's measured means of the chosen metrics (NaN where
// not measured) and whether one of them is a mean of several.
func observation(rec store.RunRecord, m Metrics) (kinetics.Observation, bool, error) {
	o := kinetics.Observation{Label: rec.Code, Coverage: math.NaN(), NucleiDensity: math.NaN()}
	var err error
	if m.Coverage {
		if o.Coverage, err = meanSI(rec, "coverage", recipe.Fraction); err != nil {
			return o, false, err
		}
	}
	if m.Density {
		if o.NucleiDensity, err = meanSI(rec, "nuclei_density", recipe.AreaDensity); err != nil {
			return o, false, err
		}
	}
	repeated := m.Coverage && count(rec, "coverage") > 1 || m.Density && count(rec, "nuclei_density") > 1
	return o, repeated, nil
}

// readRuns calls each for the runs that pass filter: through the log's
// narrow read of what a fit needs (store.FitReader, the runs with one of
// the chosen metrics, with their stored profiles of pk) when it has one,
// else through Export (and no profiles).
func readRuns(ctx context.Context, l store.RunLog, filter store.Filter, m Metrics, pk store.ProfileKey, each func(store.RunRecord, []byte) error) error {
	fr, ok := l.(store.FitReader)
	if !ok {
		return l.Export(ctx, filter, func(rec store.RunRecord) error { return each(rec, nil) })
	}
	var metrics []string
	if m.Coverage {
		metrics = append(metrics, "coverage")
	}
	if m.Density {
		metrics = append(metrics, "nuclei_density")
	}
	return fr.FitRuns(ctx, filter, metrics, pk, each)
}

// count is how many measurements of the metric the run has.
func count(rec store.RunRecord, metric string) int {
	n := 0
	for _, o := range rec.Outcomes {
		if o.Metric == metric {
			n++
		}
	}
	return n
}

// meanSI returns the mean of a run's measurements of a metric in SI, NaN
// when it has none. Each value is read with the unit stored beside it (the
// metric's canonical unit when none is stored) through recipe.Parse in the
// given dimension; a plain number ("1" or no unit) of a fraction is the
// fraction itself.
func meanSI(rec store.RunRecord, metric string, dim recipe.Dimension) (float64, error) {
	canonical := ""
	if info, ok := store.MetricByName(metric); ok {
		canonical = info.Unit
	}
	sum, n := 0.0, 0
	for _, o := range rec.Outcomes {
		if o.Metric != metric {
			continue
		}
		unit := o.Unit
		if unit == "" {
			unit = canonical
		}
		v := o.Value
		if dim != recipe.Fraction || (unit != "1" && unit != "") {
			q, err := recipe.Parse(strconv.FormatFloat(o.Value, 'g', -1, 64)+" "+unit, dim)
			if err != nil {
				return 0, fmt.Errorf("run %s: %s: %w", rec.Code, metric, err)
			}
			v = q.SI
		}
		sum += v
		n++
	}
	if n == 0 {
		return math.NaN(), nil
	}
	return sum / float64(n), nil
}
