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
// the whole changed recipe in every field a Point reads
// (TestWindowMatchesSlowPath); each worker (windowWorker) reuses its
// buffers from point to point. With a coverage
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
	// xs and ys are the axes' values as quantities, made once.
	xs, ys []recipe.Quantity
}

// newWindowBase derives, checks and predicts the recipe's steps before its
// grow step. It returns the error Predict would give every point when one
// of those steps cannot be predicted.
func newWindowBase(r *recipe.Recipe, f *recipe.Furnace, grow int, spec WindowSpec) (*windowBase, error) {
	plan := recipe.Derive(r, f)
	b := &windowBase{recipe: r, grow: grow, spec: spec, prefix: recipe.NewPrefix(plan, grow)}
	for _, v := range spec.X.Values() {
		b.xs = append(b.xs, spec.X.quantity(v))
	}
	for _, v := range spec.Y.Values() {
		b.ys = append(b.ys, spec.Y.quantity(v))
	}
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

// windowWorker is one goroutine's share of a window: an error Deriver of
// the prefix and the buffers every point reuses, so that a point
// allocates next to nothing.
type windowWorker struct {
	b     *windowBase
	d     *recipe.Deriver
	r     recipe.Recipe // the base recipe with its grow step set per point
	flows recipe.Flows  // the grow step's flows
	segs  []Segment     // the profile; those before grow are the head's
	steps []StepResult  // the per-step results; those before grow are the head's
}

// newWorker returns a worker over the base.
func (b *windowBase) newWorker() *windowWorker {
	w := &windowWorker{b: b, d: b.prefix.NewErrorDeriver(), r: *b.recipe}
	w.r.Steps = slices.Clone(b.recipe.Steps)
	if b.resume {
		n := len(b.recipe.Steps)
		w.segs = append(make([]Segment, 0, n), b.head.res.Profile.Segments[:b.grow]...)[:n]
		w.steps = append(make([]StepResult, 0, n), b.head.res.Steps[:b.grow]...)[:n]
	}
	return w
}

// point is the grid point at the ix-th value of the x axis and the iy-th
// of the y axis: the recipe with its grow step set to them, derived,
// checked (its first error) and predicted, and its plan, the worker's
// Deriver's, valid until the next point.
func (w *windowWorker) point(ix, iy int) (*recipe.Plan, Point, error) {
	b := w.b
	s := &w.r.Steps[b.grow]
	*s = b.recipe.Steps[b.grow]
	s.Flows = append(w.flows[:0], s.Flows...)
	setQuantity(s, b.spec.X, b.xs[ix])
	setQuantity(s, b.spec.Y, b.ys[iy])
	w.flows = s.Flows
	x, y := b.xs[ix].SI, b.ys[iy].SI
	plan, errs := w.d.DeriveCheck(&w.r)
	res, err := w.predict(plan)
	return plan, pointOf(x, y, errs, res, err, b.grow), err
}

// pointOf is the grid point at x, y of a recipe with findings fs (its
// errors at least, in Check's order) and prediction res, or err when it
// could not be predicted.
func pointOf(x, y float64, fs []recipe.Finding, res Result, err error, grow int) Point {
	pt := Point{X: x, Y: y, Feasible: true}
	for _, fd := range fs {
		if fd.Severity == recipe.Error {
			pt.Feasible, pt.Rule, pt.Message = false, fd.Rule, fd.Message
			break
		}
	}
	if err != nil {
		return pt
	}
	pt.Coverage, pt.NucleiDensity, pt.DomainSize, pt.T99 = res.Coverage, res.NucleiDensity, res.DomainSize, res.T99
	pt.Etching = res.Steps[grow].Etching
	return pt
}

// predict predicts a plan made by the prefix, on from the kept head, as
// Predict would in every field a Point reads: the times to 50 and 90 %
// coverage are not solved for (a window reports only T99, and each level
// is solved on its own, so T99 is the same).
func (w *windowWorker) predict(plan *recipe.Plan) (Result, error) {
	b := w.b
	if !b.resume {
		return Predict(plan, b.spec.Params, b.spec.Options)
	}
	for i := b.grow; i < len(plan.Steps); i++ {
		w.segs[i] = segmentOf(&plan.Steps[i])
	}
	if err := checkSegments(w.segs[b.grow:]); err != nil {
		return Result{}, err
	}
	in := b.head
	in.firstLevel = len(extendedLevels) - 1
	in.res.Recipe = plan.Recipe.Name
	in.res.Profile = Profile{Recipe: plan.Recipe.Name, Segments: w.segs, Total: plan.Total}
	in.res.Steps = w.steps
	in.res.Notes = slices.Clone(b.head.res.Notes)
	in.run(w.segs[b.grow:], b.grow)
	return in.result(), nil
}
