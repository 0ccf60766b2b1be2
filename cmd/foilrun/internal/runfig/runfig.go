// Package runfig builds the figure of a logged run: its plan, rebuilt
// from the run's recipe and furnace snapshots (cmd/foilrun/internal/lab),
// against what the furnace controller logged (store/furnacelog), row by
// row: temperature (°C), pressure (Pa) and each gas's flow (sccm). The
// figure is a plain chart.TimeFigure; the caller writes it as SVG or PNG.
// It reads the run log and the controller log's file and never prints.
package runfig

import (
	"context"
	"errors"
	"fmt"
	"io/fs"
	"slices"

	"github.com/foilrun/foilrun/cmd/foilrun/internal/chart"
	"github.com/foilrun/foilrun/cmd/foilrun/internal/lab"
	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/recipe/infile"
	"github.com/foilrun/foilrun/store"
	"github.com/foilrun/foilrun/store/furnacelog"
)

// KindFurnaceLog is the attachment kind of a run's controller log, as
// `run finish --furnace-log` records it.
const KindFurnaceLog = "furnace-log"

// MaxLogged is the most points a logged series keeps; a longer log is
// thinned to every k-th sample (the first and last kept), which keeps an
// SVG of a day-long 1 Hz log small enough for a browser.
const MaxLogged = 3000

// Series names of every row.
const (
	PlanSeries   = "plan"
	LoggedSeries = "logged"
)

// PlanFigure builds the figure of a logged run's plan against what its controller logged
// (the furnace-log attachment, when its file is still there with the same hash); notes say
// what could not be drawn and why.
//
// The plan is drawn step by step: the temperature from each step's start
// to its end value (ramps linear), the pressure and each gas's flow
// constant over a step. The logged series are the controller log's
// samples on the plan's time axis: a sample at t s from the log's first
// row is drawn at (offset + t)/60 min, offset being where
// furnacelog.Match puts the log's first sample in the plan. A plan that
// cannot be rebuilt (no recipe snapshot, no furnace) is an error; a log
// that cannot be read or matched is a note, and the plan is drawn alone.
func PlanFigure(ctx context.Context, log store.RunLog, rec store.RunRecord) (fig chart.TimeFigure, notes []string, err error) {
	b, err := lab.NewRebuilder(log, "")
	if err != nil {
		return fig, nil, err
	}
	rb, err := b.Rebuild(ctx, rec)
	if err != nil {
		return fig, nil, fmt.Errorf("figure of run %s: %w", rec.Code, err)
	}
	gases := planGases(rb.Plan)
	fig = planFigure(rec.Code, rb.Plan, gases)
	notes = append(notes, b.Notes()...)
	lg, offset, note := readLog(rb.Plan, rec)
	if note != "" {
		return fig, append(notes, note), nil
	}
	addLogged(&fig, gases, lg, offset)
	return fig, notes, nil
}

// planFigure is the plan alone: one row each for temperature, pressure
// and the flow of each of gases.
func planFigure(code string, p *recipe.Plan, gases []string) chart.TimeFigure {
	var ts, Tc, P []float64
	flows := map[string][]float64{}
	var steps []chart.Step
	for _, s := range p.Steps {
		end := s.Start + s.Duration
		ts = append(ts, s.Start/60, end/60)
		Tc = append(Tc, recipe.Celsius(s.T0), recipe.Celsius(s.T1))
		P = append(P, s.Pressure, s.Pressure)
		for _, g := range gases {
			v := stepFlow(s, g)
			flows[g] = append(flows[g], v, v)
		}
		steps = append(steps, chart.Step{Name: fmt.Sprintf("%d %s", s.Index+1, s.Step.Kind), Start: s.Start / 60, End: end / 60, Carbon: s.PCarbon > 0})
	}
	fig := chart.TimeFigure{
		Title: fmt.Sprintf("run %s: plan and controller log", code), XLabel: "time from the recipe start (min)", Steps: steps,
		Rows: []chart.Row{
			{YLabel: "temperature (°C)", Series: []chart.Series{{Name: PlanSeries, X: ts, Y: Tc}}},
			{YLabel: "pressure (Pa)", AutoLog: true, Series: []chart.Series{{Name: PlanSeries, X: ts, Y: P}}},
		},
	}
	for _, g := range gases {
		fig.Rows = append(fig.Rows, chart.Row{YLabel: g + " flow (sccm)", Series: []chart.Series{{Name: PlanSeries, X: ts, Y: flows[g]}}})
	}
	return fig
}

// planGases are the gases any step of the plan flows, in the order of
// their first appearance.
func planGases(p *recipe.Plan) []string {
	var gs []string
	for _, s := range p.Steps {
		for _, f := range s.Flows {
			if f.SCCM > 0 && !slices.Contains(gs, f.Gas.Symbol) {
				gs = append(gs, f.Gas.Symbol)
			}
		}
	}
	return gs
}

// stepFlow is the planned flow of gas g in step s, sccm (0 when the step
// has none).
func stepFlow(s recipe.StepPlan, g string) float64 {
	for _, f := range s.Flows {
		if f.Gas.Symbol == g {
			return f.SCCM
		}
	}
	return 0
}

// readLog reads and matches the run's controller log: the attachment of
// kind KindFurnaceLog, its file still there and with the hash the run
// recorded. It returns the log and the plan time of its first sample,
// s, or a note saying why there is none.
func readLog(p *recipe.Plan, rec store.RunRecord) (*furnacelog.Log, float64, string) {
	var att *store.Attachment
	for i := range rec.Attachments {
		if rec.Attachments[i].Kind == KindFurnaceLog {
			att = &rec.Attachments[i]
		}
	}
	switch {
	case att == nil:
		return nil, 0, "no controller log is attached to the run: the plan is drawn alone"
	case p.Furnace.Log == nil:
		return nil, 0, fmt.Sprintf("furnace %q has no controller_log mapping: the controller log %s is not drawn", p.Furnace.Name, att.Path)
	}
	fh, err := infile.Open(att.Path, infile.FurnaceLog)
	if errors.Is(err, fs.ErrNotExist) {
		return nil, 0, fmt.Sprintf("the controller log %s is no longer there: only the plan is drawn", att.Path)
	}
	if err != nil {
		return nil, 0, fmt.Sprintf("the controller log cannot be read: %v", err)
	}
	defer fh.Close()
	lg, err := furnacelog.Read(fh, att.Path, p.Furnace, furnacelog.ReadOptions{})
	if err != nil {
		return nil, 0, fmt.Sprintf("the controller log %s does not read: %v", att.Path, err)
	}
	sum, err := fh.SHA256()
	if err != nil {
		return nil, 0, fmt.Sprintf("the controller log cannot be read: %v", err)
	}
	if sum != att.SHA256 {
		return nil, 0, fmt.Sprintf("the controller log %s has changed since it was logged (sha256 %.12s, logged %.12s): it is not drawn", att.Path, sum, att.SHA256)
	}
	res, err := furnacelog.Match(p, lg, furnacelog.MatchOptions{})
	if err != nil {
		return nil, 0, fmt.Sprintf("the controller log %s does not match the plan: %v", att.Path, err)
	}
	return lg, res.Offset, ""
}

// addLogged adds the log's series to the rows: the control
// thermocouple's temperature, the pressure (when logged) and each
// plotted gas's flow (when logged), thinned to at most MaxLogged points.
func addLogged(fig *chart.TimeFigure, gases []string, lg *furnacelog.Log, offset float64) {
	keep := Thin(len(lg.Time), MaxLogged)
	pick := func(vs []float64, conv func(float64) float64) chart.Series {
		s := chart.Series{Name: LoggedSeries}
		for _, i := range keep {
			s.X = append(s.X, (offset+lg.Time[i])/60)
			s.Y = append(s.Y, conv(vs[i]))
		}
		return s
	}
	same := func(v float64) float64 { return v }
	fig.Rows[0].Series = append(fig.Rows[0].Series, pick(lg.T, recipe.Celsius))
	if lg.P != nil {
		fig.Rows[1].Series = append(fig.Rows[1].Series, pick(lg.P, same))
	}
	for k, g := range gases {
		if vs, ok := lg.Flows[g]; ok {
			fig.Rows[2+k].Series = append(fig.Rows[2+k].Series, pick(vs, sccm))
		}
	}
}

// sccm converts mol/s to sccm (recipe's unit table).
func sccm(molPerSecond float64) float64 {
	v, _ := recipe.In(molPerSecond, "sccm")
	return v
}

// Thin returns the indices of at most max of n samples: all of them when
// n ≤ max, else every k-th (k = ⌈(n−1)/(max−1)⌉) and the last.
func Thin(n, max int) []int {
	if max < 2 {
		max = 2
	}
	k := 1
	if n > max {
		k = (n - 1 + max - 2) / (max - 1)
	}
	var idx []int
	for i := 0; i < n; i += k {
		idx = append(idx, i)
	}
	if n > 0 && idx[len(idx)-1] != n-1 {
		idx = append(idx, n-1)
	}
	return idx
}
