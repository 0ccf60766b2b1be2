package chart

import (
	"fmt"
	"math"
	"sort"

	"github.com/foilrun/foilrun/kinetics"
	"github.com/foilrun/foilrun/recipe"
)

// FitParity lays a fit's residuals out as the parity figure `fit --plot`
// and serve's /fit draw: one panel per fitted metric in name order,
// coverage in % on 0–100, nuclei density in 1/mm². ok is false when there
// are no residuals.
func FitParity(res []kinetics.Residual) (fig Parity, ok bool) {
	panels := map[string]*ParityPanel{}
	var names []string
	for _, r := range res {
		pn := panels[r.Metric]
		if pn == nil {
			pn = &ParityPanel{Quantity: r.Metric}
			switch r.Metric {
			case kinetics.MetricCoverage:
				pn.Quantity, pn.Range = "coverage (%)", [2]float64{0, 100}
			case kinetics.MetricNucleiDensity:
				pn.Quantity = "nuclei density (1/mm²)"
			}
			panels[r.Metric] = pn
			names = append(names, r.Metric)
		}
		unit := "%" // coverage, a fraction
		if r.Metric == kinetics.MetricNucleiDensity {
			unit = "1/mm2"
		}
		pn.Measured = append(pn.Measured, in(r.Measured, unit))
		pn.Predicted = append(pn.Predicted, in(r.Predicted, unit))
	}
	if len(names) == 0 {
		return fig, false
	}
	sort.Strings(names)
	fig.Title = fmt.Sprintf("fit of %d measurements: predicted against measured", len(res))
	for _, n := range names {
		fig.Panels = append(fig.Panels, *panels[n])
	}
	return fig, true
}

// in is si in unit, NaN when the unit does not fit.
func in(si float64, unit string) float64 {
	v, err := recipe.In(si, unit)
	if err != nil {
		return math.NaN()
	}
	return v
}
