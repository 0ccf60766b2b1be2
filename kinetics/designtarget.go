package kinetics

import (
	"math"

	"github.com/foilrun/foilrun/recipe"
)

// The criteria of Design.
const (
	// DesignD maximises ln det of the information (D-optimality).
	DesignD = "d"
	// DesignTarget minimises the expected variance of the target quantity
	// at the recipe Suggest would choose.
	DesignTarget = "target"
)

// checkCriterion fills the default criterion and checks that the target
// criterion has a target it can watch.
func (spec *DesignSpec) checkCriterion() error {
	switch spec.Criterion {
	case "", "D", DesignD:
		spec.Criterion = DesignD
	case DesignTarget:
		if len(spec.Targets) == 0 {
			return inputErr(KindTarget, "design: the target criterion needs a target").
				hinted("give the target suggest would meet, e.g. coverage>=0.99, or use the d criterion")
		}
	default:
		return inputErr(KindSuggest, "design: criterion %q: want %s or %s", spec.Criterion, DesignD, DesignTarget)
	}
	if len(spec.Targets) > 0 && spec.Targets[0].Quantity == MetricDomainSize {
		return inputErr(KindTarget, "design: target %q: the design watches coverage or nuclei_density, not domain_size", spec.Targets[0].Text).
			hinted("put a coverage or nuclei_density target first (it is the one watched), or use the d criterion")
	}
	return nil
}

// targetPoint is the setting Suggest chose for the spec's targets and
// the quantity watched there; the zero value means no targets.
type targetPoint struct {
	cand    *Candidate
	pr      *Prepared
	density bool // ln N watched, else cloglog θ
}

// designTarget runs Suggest with the spec's targets over the same space
// and limits and prepares its best setting. A density target with only
// coverage measured is refused: coverage does not identify ln N.
func designTarget(plan *recipe.Plan, spec DesignSpec, coverageOnly bool) (targetPoint, error) {
	if len(spec.Targets) == 0 {
		return targetPoint{}, nil
	}
	tg := targetPoint{density: spec.Targets[0].Quantity == MetricNucleiDensity}
	if tg.density && coverageOnly {
		return tg, inputErr(KindTarget, "design: target %q watches nuclei_density, which neither the log nor the new runs measure", spec.Targets[0].Text).
			hinted("measure coverage,nuclei_density on the new runs, or put a coverage target first")
	}
	sug, err := Suggest(plan, SuggestSpec{Targets: spec.Targets, Vary: spec.Vary, Params: spec.Params, Options: spec.Options,
		MaxMFCShare: spec.MaxMFCShare, MeltMargin: spec.MeltMargin})
	if err != nil {
		return tg, err
	}
	if !sug.Met {
		return tg, inputErr(KindTarget, "design: no setting inside the ranges meets %s at the calibration, so there is no recipe to aim the runs at", spec.Targets[0].Text).
			hinted("run foilrun suggest with the same --target and --vary to see what binds, or use the d criterion")
	}
	if tg.pr, err = Prepare(NewProfile(recipe.Derive(sug.Recipe, plan.Furnace)), spec.Params, spec.Options); err != nil {
		return tg, err
	}
	tg.cand = sug.Best
	return tg, nil
}

// at is the prepared setting, nil without targets.
func (tg targetPoint) at() *Prepared { return tg.pr }

// watch sets the row the target criterion minimises the variance of, when
// minimise; with D the rows are only reported.
func (tg targetPoint) watch(d *designInfo, minimise bool) {
	if minimise {
		d.g = tg.row(d)
	}
}

func (tg targetPoint) row(d *designInfo) []float64 {
	if tg.density {
		return d.at[1]
	}
	return d.at[0]
}

// report fills the target's fields of the result.
func (tg targetPoint) report(res *DesignResult, d *designInfo, pick []int) {
	if tg.pr == nil {
		return
	}
	c := *tg.cand
	c.Margins = nil
	res.Target = &c
	sigma := d.sc
	res.TargetQuantity = "cloglog coverage"
	if tg.density {
		sigma, res.TargetQuantity = d.sd, "ln nuclei_density"
	}
	row := tg.row(d)
	res.TargetSENow = sigma * math.Sqrt(d.predVar(d.f0, row))
	res.TargetSEAfter = sigma * math.Sqrt(d.predVar(d.total(pick, nil), row))
}
