package main

import (
	"context"
	"errors"
	"fmt"
	"os"
	"path/filepath"

	"github.com/foilrun/foilrun/cmd/foilrun/internal/lab"
	"github.com/foilrun/foilrun/kinetics"
	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/store"
)

// Coverages that let a prediction decide a micrograph's polarity: with an
// interval (a params file with a covariance) the whole 90 % interval must
// lie below predictLowInterval or above predictHighInterval; with a point
// prediction only (no covariance, e.g. the illustrative defaults) the
// prediction must lie below predictLowPoint or above predictHighPoint,
// wider margins for having no interval.
const (
	predictLowInterval  = 0.35
	predictHighInterval = 0.65
	predictLowPoint     = 0.2
	predictHighPoint    = 0.8
)

// predictedSide is what the run's predicted coverage says of its
// micrographs: whether it decides the polarity, whether the domains are the
// larger class, and why, in words.
type predictedSide struct {
	decides  bool
	majority bool
	reason   string
}

// predictSide predicts the run's final coverage from its recipe snapshot
// (rebuilt by lab.Rebuilder, --furnace overriding the recipe's furnace)
// with the --params file and says whether it decides the polarity.
func (o *outcomeMeasureOptions) predictSide(ctx context.Context, l store.RunLog, rec store.RunRecord) (predictedSide, error) {
	b, err := lab.NewRebuilder(l, o.furnace)
	if err != nil {
		return predictedSide{}, err
	}
	rb, err := b.Rebuild(ctx, rec)
	if errors.Is(err, lab.ErrNoFurnace) || errors.Is(err, lab.ErrNoSnapshot) {
		return predictedSide{}, withHint(inputError(fmt.Errorf("outcome measure: the polarity is not known and the run's coverage cannot be predicted: %w", err)),
			"give --polarity darker|brighter or --instrument NAME, or --furnace FILE to predict the run")
	}
	if err != nil {
		return predictedSide{}, err
	}
	params, err := loadParams(o.params)
	if err != nil {
		return predictedSide{}, err
	}
	res, err := kinetics.Predict(rb.Plan, params, kinetics.Options{})
	if err != nil {
		return predictedSide{}, fmt.Errorf("outcome measure: predict run %s: %w", rec.Code, err)
	}
	if !params.HasCovariance() {
		return decideSide(res.Coverage, res.Coverage, false), nil
	}
	u, err := kinetics.PredictInterval(kinetics.NewProfile(rb.Plan), params, kinetics.Options{}, kinetics.IntervalSettings{})
	if err != nil {
		return predictedSide{}, fmt.Errorf("outcome measure: predict run %s: %w", rec.Code, err)
	}
	return decideSide(u.Coverage.Lo, u.Coverage.Hi, true), nil
}

// decideSide decides the polarity from a predicted coverage: the interval
// [lo, hi] when interval is true, else the point lo = hi.
func decideSide(lo, hi float64, interval bool) predictedSide {
	low, high := predictLowPoint, predictHighPoint
	what := fmt.Sprintf("predicted coverage %.1f %% (no interval: the params file has no covariance)", 100*lo)
	if interval {
		low, high = predictLowInterval, predictHighInterval
		what = fmt.Sprintf("predicted coverage %.1f–%.1f %% (90 %% interval)", 100*lo, 100*hi)
	}
	switch {
	case hi < low:
		return predictedSide{decides: true, reason: fmt.Sprintf("%s is below %.0f %%: domains are the smaller class", what, 100*low)}
	case lo > high:
		return predictedSide{decides: true, majority: true, reason: fmt.Sprintf("%s is above %.0f %%: domains are the larger class", what, 100*high)}
	}
	return predictedSide{reason: fmt.Sprintf("%s is not below %.0f %% nor above %.0f %%, so it does not decide which class is graphene", what, 100*low, 100*high)}
}

// recipeSite is the site file the run's recipe names, resolved as the
// recipe resolves it (relative to the file its snapshot was read from),
// "" when it names none or the file is not there.
func recipeSite(ctx context.Context, l store.RunLog, rec store.RunRecord) (string, error) {
	if rec.RecipeHash == "" {
		return "", nil
	}
	snap, err := l.Snapshot(ctx, rec.RecipeHash)
	if err != nil {
		return "", err
	}
	r, err := recipe.ParseRecipe(snap.File, snap.Content)
	if err != nil || r.Site == "" {
		return "", nil // the site is only a default here; check reports a bad recipe
	}
	path := r.Site
	if !filepath.IsAbs(path) && snap.File != "" {
		path = filepath.Join(filepath.Dir(snap.File), path)
	}
	if fi, err := os.Stat(path); err != nil || !fi.Mode().IsRegular() {
		return "", nil
	}
	return path, nil
}
