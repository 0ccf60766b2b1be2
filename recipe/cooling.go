package recipe

import (
	"math"
	"sort"
)

// Natural cooling of a furnace. Below some temperature a tube furnace
// cannot follow a programmed cooling rate: with the heater off it cools
// only as fast as it loses heat. A furnace file describes that with
// cooling: either Newton's law of cooling,
//
//	dT/dt = −(T − T_a)/τ,  T(t) = T_a + (T0 − T_a)·e^(−t/τ)
//
// (time constant τ, ambient T_a), or a table of the natural rate at a few
// temperatures. A cool step then runs at the slower of its programmed rate
// R and the natural rate r(T): at R while R ≤ r(T), naturally below.
//
// References:
//   - F. P. Incropera, D. P. DeWitt, Fundamentals of Heat and Mass Transfer,
//     6th ed., Wiley (2007), §5.2 (lumped capacitance, Newtonian cooling).

// DefaultAmbient is the ambient temperature natural cooling tends to when
// the furnace file gives none (25 °C).
const DefaultAmbient = 298.15 // K

// NaturalFloor: a cool step whose target is at or below the ambient ends,
// in the plan, this far above it (natural cooling never gets closer).
const NaturalFloor = 5.0 // K

// Cooling is a furnace's natural cooling: a Newtonian time constant, or a
// table of natural cooling rates by temperature.
type Cooling struct {
	TimeConstant Quantity      `yaml:"time_constant" dim:"duration"`
	Ambient      Quantity      `yaml:"ambient" dim:"temperature"` // default 25 C
	Rates        []CoolingRate `yaml:"rates"`                     // instead of time_constant
	Pos          Pos           `yaml:"-"`
}

// CoolingRate is the natural cooling rate at one temperature.
type CoolingRate struct {
	Temperature Quantity `yaml:"temperature" dim:"temperature" req:"true"`
	Rate        Quantity `yaml:"rate" dim:"temperature rate" req:"true"`
	Pos         Pos      `yaml:"-"`
}

func (c *Cooling) ambient() float64 {
	if c.Ambient.IsZero() {
		return DefaultAmbient
	}
	return c.Ambient.SI
}

// NaturalRate returns the rate (K/s, positive) at which the furnace cools
// by itself at temperature T: (T − T_a)/τ for a time constant; for a
// table, linear between its points, the top point's rate above it, and
// falling linearly to zero at the ambient below the lowest point. It
// returns +Inf for a furnace without cooling data (no limit) and 0 at or
// below the ambient.
func (f *Furnace) NaturalRate(T float64) float64 {
	c := f.Cooling
	if c == nil {
		return math.Inf(1)
	}
	Ta := c.ambient()
	if T <= Ta {
		return 0
	}
	if c.TimeConstant.SI > 0 {
		return (T - Ta) / c.TimeConstant.SI
	}
	rs := c.Rates
	if len(rs) == 0 {
		return math.Inf(1)
	}
	i := sort.Search(len(rs), func(i int) bool { return rs[i].Temperature.SI >= T })
	switch {
	case i == len(rs):
		return rs[len(rs)-1].Rate.SI
	case i == 0:
		lo := rs[0]
		if lo.Temperature.SI <= Ta {
			return lo.Rate.SI
		}
		return lo.Rate.SI * (T - Ta) / (lo.Temperature.SI - Ta)
	}
	a, b := rs[i-1], rs[i]
	w := (T - a.Temperature.SI) / (b.Temperature.SI - a.Temperature.SI)
	return a.Rate.SI + w*(b.Rate.SI-a.Rate.SI)
}

// NaturalBelow returns the temperature (K) below which the furnace cannot
// cool at rate R (K/s) by itself: T_a + R·τ for a time constant, the
// highest such temperature of a table (found by bisection); −Inf without
// cooling data.
func (f *Furnace) NaturalBelow(R float64) float64 {
	c := f.Cooling
	if c == nil || (c.TimeConstant.SI <= 0 && len(c.Rates) == 0) {
		return math.Inf(-1)
	}
	if c.TimeConstant.SI > 0 {
		return c.ambient() + R*c.TimeConstant.SI
	}
	hi := c.Rates[len(c.Rates)-1].Temperature.SI
	if f.NaturalRate(hi) < R {
		return math.Inf(1) // slower than R at every temperature
	}
	lo := c.ambient()
	for k := 0; k < 60; k++ { // natural rate is taken as rising with T
		mid := (lo + hi) / 2
		if f.NaturalRate(mid) < R {
			lo = mid
		} else {
			hi = mid
		}
	}
	return hi
}

// CoolTime returns the time (s) to cool from T0 to T1 < T0 at programmed
// rate R (K/s) or the natural rate where that is slower:
//
//	t = (T0 − T_c)/R + τ·ln((T_c − T_a)/(T1 − T_a)),  T_c = T_a + R·τ
//
// for a time constant (each term only over the part of [T1, T0] it
// covers), ∫ dT / min(R, r(T)) by Simpson's rule for a table. +Inf when T1
// is at or below the ambient (natural cooling never gets there).
func (f *Furnace) CoolTime(T0, T1, R float64) float64 {
	if T1 >= T0 {
		return 0
	}
	Tc := f.NaturalBelow(R)
	if T1 >= Tc || f.Cooling == nil {
		return (T0 - T1) / R
	}
	Ta := f.Cooling.ambient()
	if T1 <= Ta {
		return math.Inf(1)
	}
	top := math.Min(T0, Tc)
	t := (T0 - top) / R
	if tau := f.Cooling.TimeConstant.SI; tau > 0 {
		return t + tau*math.Log((top-Ta)/(T1-Ta))
	}
	inv := func(T float64) float64 { return 1 / math.Min(R, f.NaturalRate(T)) }
	return t + simpson(inv, T1, top, 200)
}

// CoolReach returns the temperature (K) reached after cooling from T0 for
// dur seconds at rate R (K/s), or naturally where that is slower, but not
// below the target T1: T(t) = T_a + (T_c − T_a)·e^(−t'/τ) for the natural
// part of a time constant, a fine explicit integration for a table.
func (f *Furnace) CoolReach(T0, T1, R, dur float64) float64 {
	if T1 >= T0 || dur <= 0 {
		return T0
	}
	if f.CoolTime(T0, T1, R) <= dur {
		return T1
	}
	Tc := f.NaturalBelow(R)
	if T0-R*dur >= Tc {
		return T0 - R*dur
	}
	t := math.Max(0, (T0-Tc)/R)
	T := math.Min(T0, Tc)
	if tau := f.Cooling.TimeConstant.SI; tau > 0 {
		Ta := f.Cooling.ambient()
		return math.Max(T1, Ta+(T-Ta)*math.Exp(-(dur-t)/tau))
	}
	const n = 2000
	dt := (dur - t) / n
	for k := 0; k < n; k++ { // midpoint rule
		mid := T - dt/2*math.Min(R, f.NaturalRate(T))
		T -= dt * math.Min(R, f.NaturalRate(mid))
	}
	return math.Max(T1, T)
}
