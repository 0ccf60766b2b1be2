package kinetics

import (
	"fmt"
	"math"
	"strings"

	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/recipe/gas"
)

// axisRange is one parameter of the search space other than the grow
// time, with its range in SI units.
type axisRange struct {
	name   string // ParamTemperature, ParamPressure or a gas symbol
	dim    recipe.Dimension
	lo, hi float64
	log    bool   // log-spaced grid
	limit  string // what sets hi
}

// addAxis adds one entry of SuggestSpec.Vary to the search space: NAME or
// NAME=FROM:TO. The grow time is not an axis; varying it sets the bracket
// its root is found in.
func (s *searcher) addAxis(spec string, plan *recipe.Plan) error {
	name, rng, hasRange := strings.Cut(spec, "=")
	ctx := fmt.Sprintf("vary %q", spec)
	param, dim, err := parameterOf(KindVary, ctx, strings.TrimSpace(name))
	if err != nil {
		return err
	}
	var a axisRange
	switch param {
	case ParamDuration:
		return s.setTimeRange(ctx, rng, hasRange)
	case ParamTemperature:
		a = s.temperatureRange(plan)
	case ParamPressure:
		a = s.pressureRange()
	default:
		line := s.f.LineFor(param)
		if line == nil {
			return inputErr(KindVary, "%s: furnace %q has no gas line for %s", ctx, s.f.Name, param)
		}
		fs := line.FullScaleOfGas()
		share := s.spec.MaxMFCShare
		a = axisRange{name: param, dim: dim, lo: fs * line.LowEnd.SI * 1.001, hi: fs * share, log: true,
			limit: fmt.Sprintf("%.4g %% of the %s line's full scale %.4g sccm", share*100, param, fs/gas.MolPerSCCMPerSecond)}
	}
	for _, b := range s.axes {
		if b.name == a.name {
			return inputErr(KindVary, "%s: %s is given twice", ctx, a.name)
		}
	}
	if hasRange {
		lo, hi, err := parseRange(ctx, rng, a.dim)
		if err != nil {
			return err
		}
		if hi > a.hi*(1+1e-9) {
			return inputErr(KindVary, "%s: the range goes beyond the %s", ctx, a.limit)
		}
		if a.dim != recipe.Temperature && !(lo > 0) {
			return inputErr(KindVary, "%s: %ss must be greater than zero", ctx, a.dim)
		}
		if hi < a.hi {
			a.limit = "top of the range searched"
		}
		a.lo, a.hi = lo, math.Min(hi, a.hi)
	}
	s.axes = append(s.axes, a)
	return nil
}

// setTimeRange varies the grow time, within FROM:TO when given (default
// 10 s to 4 h).
func (s *searcher) setTimeRange(ctx, rng string, hasRange bool) error {
	s.varyTime = true
	if !hasRange {
		return nil
	}
	lo, hi, err := parseRange(ctx, rng, recipe.Duration)
	if err != nil {
		return err
	}
	if !(lo > 0) {
		return inputErr(KindVary, "%s: durations must be greater than zero", ctx)
	}
	s.tlo, s.thi = lo, hi
	return nil
}

// temperatureRange is 100 K below the recipe's grow temperature (or the
// ceiling) up to the furnace's ceiling, kept the melt margin below the
// copper bound (copper's melting point less the thermocouple margin),
// where recipe.Check reports an error; never closer than half a kelvin.
func (s *searcher) temperatureRange(plan *recipe.Plan) axisRange {
	a := axisRange{name: ParamTemperature, dim: recipe.Temperature}
	a.hi, a.limit = s.f.TemperatureCeiling()
	margin := s.f.Heater.ThermocoupleMargin.SI
	if cu := gas.CopperMeltingPoint - margin - math.Max(s.spec.MeltMargin, 0.5); a.hi >= cu {
		a.hi = cu
		a.limit = fmt.Sprintf("copper melting point %.2f C less the %.3g K thermocouple margin and the %.3g K melt margin",
			recipe.Celsius(gas.CopperMeltingPoint), margin, s.spec.MeltMargin)
	}
	a.lo = math.Min(plan.Steps[s.grow].T0, a.hi) - 100
	return a
}

// pressureRange is the grow step's pressure set-point from the base
// pressure (or the gauge's low end, if higher) to one atmosphere (or the
// gauge's high end, if lower), log-spaced; recipe.Check rejects the
// set-points the pump cannot hold with the step's gas load.
func (s *searcher) pressureRange() axisRange {
	v := s.f.Vacuum
	a := axisRange{name: ParamPressure, dim: recipe.Pressure, log: true,
		lo: math.Max(v.BasePressure.SI, v.GaugeMin.SI), hi: gas.StandardAtmosphere, limit: "one atmosphere"}
	if g := v.GaugeMax.SI; g > 0 && g < a.hi {
		a.hi, a.limit = g, fmt.Sprintf("%s's high end %.4g Pa", v.Gauge, g)
	}
	return a
}

// parseRange reads FROM:TO of the dimension, FROM below TO.
func parseRange(ctx, rng string, dim recipe.Dimension) (lo, hi float64, err error) {
	parts := strings.Split(rng, ":")
	if len(parts) != 2 {
		return 0, 0, inputErr(KindVary, "%s: want NAME=FROM:TO, e.g. temperature=950C:1060C", ctx)
	}
	a, err := recipe.Parse(parts[0], dim)
	if err != nil {
		return 0, 0, inputErr(KindVary, "%s: from %v", ctx, err)
	}
	b, err := recipe.Parse(parts[1], dim)
	if err != nil {
		return 0, 0, inputErr(KindVary, "%s: to %v", ctx, err)
	}
	if !(a.SI < b.SI) {
		return 0, 0, inputErr(KindVary, "%s: from must be below to", ctx)
	}
	return a.SI, b.SI, nil
}
