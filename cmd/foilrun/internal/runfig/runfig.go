// Package runfig draws a logged run's plan against what its controller
// logged. This file is a stand-in that draws the plan's temperature only;
// the full figure replaces it.
package runfig

import (
	"context"
	"fmt"

	"github.com/foilrun/foilrun/cmd/foilrun/internal/chart"
	"github.com/foilrun/foilrun/cmd/foilrun/internal/lab"
	"github.com/foilrun/foilrun/store"
)

// PlanFigure builds the figure of a logged run's plan against what its controller logged
// (the furnace-log attachment, when its file is still there with the same hash); notes say
// what could not be drawn and why.
func PlanFigure(ctx context.Context, log store.RunLog, rec store.RunRecord) (fig chart.TimeFigure, notes []string, err error) {
	b, err := lab.NewRebuilder(log, "")
	if err != nil {
		return fig, nil, err
	}
	rb, err := b.Rebuild(ctx, rec)
	if err != nil {
		return fig, []string{fmt.Sprintf("no plan drawn: %v", err)}, nil
	}
	var ts, Tc []float64
	for _, s := range rb.Plan.Steps {
		ts = append(ts, s.Start/60, (s.Start+s.Duration)/60)
		Tc = append(Tc, s.T0-273.15, s.T1-273.15)
		fig.Steps = append(fig.Steps, chart.Step{Name: fmt.Sprint(s.Index + 1), Start: s.Start / 60, End: (s.Start + s.Duration) / 60})
	}
	fig.Title, fig.XLabel = rec.Code+": plan", "time from the recipe start (min)"
	fig.Rows = []chart.Row{{YLabel: "temperature (°C)", Series: []chart.Series{{Name: "planned", X: ts, Y: Tc}}}}
	return fig, []string{"only the planned temperature is drawn"}, nil
}
