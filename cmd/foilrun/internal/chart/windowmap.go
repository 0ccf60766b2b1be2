package chart

import (
	"fmt"
	"math"

	"github.com/foilrun/foilrun/kinetics"
)

// WindowShows are the quantities a process-window map can show (`window
// --show`, serve's /window): the stored metrics' names and time_to_99.
var WindowShows = []string{"coverage", "nuclei_density", "domain_size", "time_to_99"}

// WindowValue is the show quantity of a window point in display units:
// coverage in %, nuclei per mm², domain size in µm, minutes of growth to
// 99 % coverage; NaN when it has none (e.g. 99 % never reached).
func WindowValue(show string, p kinetics.Point) float64 {
	switch show {
	case "nuclei_density":
		return in(p.NucleiDensity, "1/mm2")
	case "domain_size":
		return in(p.DomainSize, "um")
	case "time_to_99":
		return p.T99 / 60
	}
	return p.Coverage * 100
}

// WindowLabel is the axis label of a show quantity.
func WindowLabel(show string) string {
	switch show {
	case "nuclei_density":
		return "nuclei per mm2"
	case "domain_size":
		return "domain size (um)"
	case "time_to_99":
		return "time to 99 % (min)"
	}
	return "coverage (%)"
}

// WindowMap lays a process-window map out as a heat map of its show
// quantity, infeasible cells blocked, axes in display units.
func WindowMap(m *kinetics.Map, show string) HeatMap {
	z := make([][]float64, len(m.Ys))
	blocked := make([][]bool, len(m.Ys))
	for iy, row := range m.Points {
		z[iy] = make([]float64, len(row))
		blocked[iy] = make([]bool, len(row))
		for ix, p := range row {
			z[iy][ix] = WindowValue(show, p)
			if !p.Feasible {
				z[iy][ix], blocked[iy][ix] = math.NaN(), true
			}
		}
	}
	return HeatMap{
		Title:  fmt.Sprintf("%s: %s", m.Recipe, WindowLabel(show)),
		XLabel: m.X.Label(), YLabel: m.Y.Label(), ZLabel: WindowLabel(show),
		X: displayed(m.X, m.Xs), Y: displayed(m.Y, m.Ys), Z: z, Blocked: blocked,
		BlockedLabel: "outside furnace limits", MissingLabel: "not reached",
	}
}

// displayed is each SI value of an axis in the axis's display unit.
func displayed(a kinetics.Axis, si []float64) []float64 {
	out := make([]float64, len(si))
	for i, v := range si {
		out[i] = a.Display(v)
	}
	return out
}
