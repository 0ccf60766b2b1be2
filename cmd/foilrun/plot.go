package main

import (
	"github.com/foilrun/foilrun/cmd/foilrun/internal/chart"
)

// Plot output goes through internal/chart; the commands turn their
// results into its plain figures (predictFigure in predict.go,
// chart.FitParity for fit, chart.WindowMap for window).

// checkPlotPath accepts a .png or .svg file name.
func checkPlotPath(path string) error {
	if chart.Supported(path) {
		return nil
	}
	return usagef("--plot %q: want a file ending in .png or .svg", path)
}
