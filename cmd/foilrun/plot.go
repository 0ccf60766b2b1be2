package main

import (
	"io"

	"github.com/foilrun/foilrun/cmd/foilrun/internal/chart"
	"github.com/foilrun/foilrun/cmd/foilrun/internal/outfile"
)

// Plot output goes through internal/chart; the commands turn their
// results into its plain figures (predictFigure in predict.go,
// writeParity in fit.go, writeHeatMap here for window).

// checkPlotPath accepts a .png or .svg file name.
func checkPlotPath(path string) error {
	if chart.Supported(path) {
		return nil
	}
	return usagef("--plot %q: want a file ending in .png or .svg", path)
}

// writeHeatMap draws z over (xs, ys) with a colour bar into path through
// the guard; cells where blocked is true are outside the furnace's
// limits, NaN cells have no value (the time to 99 % is never reached
// there).
func writeHeatMap(path string, g outfile.Guard, title, xlabel, ylabel, zlabel string, xs, ys []float64, z [][]float64, blocked [][]bool) error {
	m := chart.HeatMap{
		Title: title, XLabel: xlabel, YLabel: ylabel, ZLabel: zlabel, X: xs, Y: ys, Z: z, Blocked: blocked,
		BlockedLabel: "outside furnace limits", MissingLabel: "not reached",
	}
	return writeOutput(path, g, func(w io.Writer) error { return chart.WriteHeatMap(w, path, m) })
}
