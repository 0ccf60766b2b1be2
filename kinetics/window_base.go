package kinetics

import (
	"slices"

	"github.com/foilrun/foilrun/recipe"
)

// windowBase is what every point of a window shares. A point changes only
// the first grow step (index grow), and nothing before a step depends on
// it, so the steps before the grow step are done once:
//
//   - derived and checked once (recipe.Prefix): per point only the grow
//     step and the steps after it are derived again, only their own checks
//     and the checks of the whole plan (copper-melting summary, sequence)
//     run again, and a step after the grow step whose inputs (start
//     temperature, valve state, the pressure before it where it reads it)
//     a worker has met before is taken from its recipe.Deriver;
//   - integrated once: the model's state (moments, first carbon, times to
//     coverage, per-step results) after the segments before the grow step
//     is kept, and each point integrates on from there with its own grow
//     segment and the segments after it.
//
// Both give exactly what recipe.Derive, recipe.Check and Predict give on
// the whole changed recipe (TestWindowMatchesSlowPath). With a coverage
// curve (Options.Samples > 0) the sample spacing depends on the recipe's
// total time, which the grow step changes, so each point is then
// predicted from its start.
type windowBase struct {
	recipe *recipe.Recipe
	grow   int
	spec   WindowSpec
	prefix *recipe.Prefix
	// head is the prediction after the segments before grow (when resume).
	head   integrator
	resume bool
}

// newWindowBase derives, checks and predicts the recipe's steps before its
// grow step. It returns the error Predict would give every point when one
// of those steps cannot be predicted.
func newWindowBase(r *recipe.Recipe, f *recipe.Furnace, grow int, spec WindowSpec) (*windowBase, error) {
	plan := recipe.Derive(r, f)
	b := &windowBase{recipe: r, grow: grow, spec: spec, prefix: recipe.NewPrefix(plan, grow)}
	opts := spec.Options.withDefaults()
	if opts.Samples > 0 {
		return b, nil
	}
	prof := NewProfile(plan)
	if err := checkSegments(prof.Segments[:grow]); err != nil {
		return nil, err
	}
	b.head, b.resume = newIntegrator(prof, spec.Params, opts), true
	b.head.run(prof.Segments[:grow], 0)
	return b, nil
}

// changed returns a copy of the recipe with the grow step set to x and y
// on the two axes; the base recipe is not written.
func (b *windowBase) changed(x, y float64) *recipe.Recipe {
	r := *b.recipe
	r.Steps = slices.Clone(b.recipe.Steps)
	s := &r.Steps[b.grow]
	setParam(s, b.spec.X, x)
	setParam(s, b.spec.Y, y)
	return &r
}

// evaluate derives, checks and predicts one point with d, a Deriver of
// b.prefix: the plan, findings and prediction recipe.Derive, recipe.Check
// and Predict give on the changed recipe.
func (b *windowBase) evaluate(d *recipe.Deriver, x, y float64) (*recipe.Plan, []recipe.Finding, Result, error) {
	plan, fs := d.DeriveCheck(b.changed(x, y))
	res, err := b.predict(plan)
	return plan, fs, res, err
}

// predict predicts a plan made by b.prefix, on from the kept head.
func (b *windowBase) predict(plan *recipe.Plan) (Result, error) {
	prof := NewProfile(plan)
	if !b.resume {
		return PredictProfile(prof, b.spec.Params, b.spec.Options)
	}
	if err := checkSegments(prof.Segments[b.grow:]); err != nil {
		return Result{}, err
	}
	in := b.head
	in.res.Recipe, in.res.Profile = prof.Recipe, prof
	in.res.Steps = make([]StepResult, len(prof.Segments))
	copy(in.res.Steps, b.head.res.Steps[:b.grow])
	in.res.Notes = slices.Clone(b.head.res.Notes)
	in.run(prof.Segments[b.grow:], b.grow)
	return in.result(), nil
}

// point is one grid point of the map, evaluated with d.
func (b *windowBase) point(d *recipe.Deriver, x, y float64) (Point, error) {
	_, fs, res, err := b.evaluate(d, x, y)
	pt := Point{X: x, Y: y, Feasible: true}
	for _, fd := range fs {
		if fd.Severity == recipe.Error {
			pt.Feasible, pt.Rule, pt.Message = false, fd.Rule, fd.Message
			break
		}
	}
	if err != nil {
		return pt, err
	}
	pt.Coverage, pt.NucleiDensity, pt.DomainSize, pt.T99 = res.Coverage, res.NucleiDensity, res.DomainSize, res.T99
	pt.Etching = res.Steps[b.grow].Etching
	return pt, nil
}
