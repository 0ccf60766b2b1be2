package recipe

import (
	"math"
	"slices"

	"github.com/foilrun/foilrun/recipe/gas"
)

// Constants of the plan.
const (
	RoomTemperature = 293.15 // K: where throughput Q = ṅRT is counted (at the pump)
	atmosphere      = 101325.0
)

// FlowPlan is one gas of a step with its derived numbers.
type FlowPlan struct {
	Gas      gas.Gas
	Molar    float64 // mol/s
	SCCM     float64 // the same flow in sccm
	Fraction float64 // mole fraction in the feed
	Partial  float64 // partial pressure, Pa
}

// StepPlan is a step with everything derived from it and the furnace.
type StepPlan struct {
	Index    int
	Step     *Step
	Label    string  // "4 grow (main growth)"
	Start    float64 // s from the start of the recipe
	Duration float64 // s
	T0, T1   float64 // K at the start and end (equal for holds)
	// ProgrammedDuration is a ramp's or cool's duration at its programmed
	// rate, s; Duration differs from it where natural cooling is slower.
	ProgrammedDuration float64

	OpenToPump bool    // valve open to the pump: the pressure follows the throughput
	Pressure   float64 // total pressure during the step, Pa: the set-point, never below PumpLimit
	// Setpoint is the pressure the controller is asked to hold, Pa, set on
	// the step or carried over from SetpointStep (0-based; −1 for the
	// atmosphere the tube starts at); 0 when open to the pump.
	Setpoint     float64
	SetpointStep int
	PumpLimit    float64 // lowest pressure the pump can hold with this throughput, Pa
	Throughput   float64 // Pa·m³/s at RoomTemperature
	// CycleLow is the pressure each pump-and-backfill cycle of a cycled
	// purge pumps down to, Pa (its pump_to, or CycleLowDefault); 0 for
	// other steps. CycleTime is the time of one cycle, s.
	CycleLow, CycleTime float64

	Flows           []FlowPlan
	TotalFlow       float64 // mol/s
	PCH4, PH2       float64 // partial pressures, Pa
	PCarbon         float64 // summed partial pressure of carbon sources, Pa
	CH4H2Ratio      float64 // molar flow ratio CH4:H2; NaN without H2
	VolumetricFlow  float64 // actual m³/s at the step's mean temperature and pressure
	Velocity        float64 // mean gas velocity in the tube, m/s
	Residence       float64 // time gas spends in the heated zone, s
	Viscosity       float64 // mixture viscosity (Wilke), Pa·s
	Reynolds        float64 // Re = ρ·v·d/η
	Knudsen         float64 // Kn = λ/d
	Supersaturation float64 // pCH4/pCH4,eq over graphite; NaN without CH4
	// CopperLoss is the copper lost per free face, m, by the model that
	// applies (CopperModel): the Hertz–Knudsen vacuum bound
	// (CopperLossVacuum) up to CopperDiffusionPressure, the diffusion-limited
	// estimate (CopperLossDiffusion, 0 below that pressure) above it.
	CopperLoss          float64
	CopperLossVacuum    float64
	CopperLossDiffusion float64
	CopperModel         CopperModel

	Flammable    bool // a flammable gas flows
	CarbonSource bool // a carbon source flows
}

// MeanTemperature returns the mean of the start and end temperature, K.
func (s StepPlan) MeanTemperature() float64 { return (s.T0 + s.T1) / 2 }

// MaxTemperature returns the higher of the start and end temperature, K.
func (s StepPlan) MaxTemperature() float64 { return math.Max(s.T0, s.T1) }

// Plan is a recipe laid out in time on a furnace, with the derived
// gas-phase numbers of each step.
type Plan struct {
	Recipe  *Recipe
	Furnace *Furnace
	// Site is the site the plan runs in, or nil; Derive leaves it nil and
	// the caller that has one sets it (Check reads its purge policy).
	Site  *Site
	Steps []StepPlan
	Total float64 // s
}

// Derive lays the recipe out on the furnace: start times, durations,
// temperatures, pressures and the gas-phase numbers of every step. It
// does not judge them; Check does. The recipe and furnace must have been
// loaded (validated) by this package.
func Derive(r *Recipe, f *Furnace) *Plan {
	p := &Plan{Recipe: r, Furnace: f, Steps: make([]StepPlan, len(r.Steps))}
	p.deriveFrom(0, startState(r))
	return p
}

// deriveState is what Derive carries from one step to the next: the
// temperature and time the step starts at and the valve state the steps
// before left.
type deriveState struct {
	T, t float64 // K, s
	v    valve
}

// startState is the state before a recipe's first step: the recipe's start
// temperature (DefaultStartTemperature without one), time 0, the tube
// closed at atmosphere.
func startState(r *Recipe) deriveState {
	st := deriveState{T: DefaultStartTemperature, v: valve{pressure: atmosphere, from: -1}}
	if !r.StartTemperature.IsZero() {
		st.T = r.StartTemperature.SI
	}
	return st
}

// deriveFrom derives steps k… of the plan from the state st the steps
// before k leave, and sets the total time. Step i reads only st and the
// plan of step i−1 (prevPressure), so steps before k are left as they are.
func (p *Plan) deriveFrom(k int, st deriveState) {
	for i := k; i < len(p.Steps); i++ {
		p.deriveStep(i, &st, nil)
	}
	p.Total = st.t
}

// deriveStep derives step i from the state st before it and moves st past
// it. It reads st, the recipe's step i, the furnace, and the pressure of
// step i−1 where readsPrevPressure says so; it sets every field of the
// step's plan. The step's Flows are appended to flows[:0] (nil allocates),
// a buffer the caller owns and no other plan reads.
func (p *Plan) deriveStep(i int, st *deriveState, flows []FlowPlan) {
	f := p.Furnace
	s := &p.Recipe.Steps[i]
	sp := &p.Steps[i]
	*sp = StepPlan{Index: i, Step: s, Label: s.Label(i), Start: st.t}
	temperatures(sp, st.T, f)
	st.v.step(s, i)
	sp.OpenToPump = st.v.pump
	derive(sp, f, flows)
	st.v.held(sp, p.prevPressure(i))
	p.duration(i)
	if (s.Kind == KindCool || s.Kind == KindRamp) && !s.Duration.IsZero() && sp.T1 < sp.T0 {
		sp.T1 = f.CoolReach(sp.T0, sp.T1, s.Rate.SI, sp.Duration) // where natural cooling gets in that time
	}
	gasPhase(sp, f)
	st.T = sp.T1
	st.t += sp.Duration
}

// readsPrevPressure reports whether deriving a step of this kind reads the
// pressure the step before left: a leak check holds it (valve.held), a
// pump-down starts from it and a vent backfills from it (Plan.duration).
// No other kind reads it.
func readsPrevPressure(k StepKind) bool {
	return k == KindLeakCheck || k == KindPump || k == KindVent
}

// temperatures sets the step's start and end temperatures from the
// temperature T it starts at, and a ramp's or cool's duration from its
// rate (0 without one): going down, at the slower of the rate and the
// furnace's natural cooling (CoolTime), and no lower than NaturalFloor
// above the ambient when the target is below what natural cooling reaches.
func temperatures(sp *StepPlan, T float64, f *Furnace) {
	s := sp.Step
	sp.T0, sp.T1 = T, T
	switch s.Kind {
	case KindRamp, KindCool:
		sp.T1 = s.To.SI
		if s.Rate.SI <= 0 {
			break
		}
		sp.Duration = math.Abs(sp.T1-sp.T0) / s.Rate.SI
		sp.ProgrammedDuration = sp.Duration
		if sp.T1 < sp.T0 && f.Cooling != nil {
			sp.T1 = math.Max(sp.T1, f.Cooling.ambient()+NaturalFloor)
			sp.Duration = f.CoolTime(sp.T0, sp.T1, s.Rate.SI)
		}
	case KindAnneal, KindGrow:
		sp.T0, sp.T1 = s.Temperature.SI, s.Temperature.SI
	}
}

// valve is the state the recipe leaves the tube in from step to step:
// open to the pump or not, and the pressure set-point it holds when not.
type valve struct {
	pressure float64 // Pa
	from     int     // step that set the pressure, −1 for the starting atmosphere
	pump     bool
}

// held sets the pressure step sp has: the pump limit when open
// to the pump, the pressure the step before left for a closed leak check,
// else the set-point, set or carried over, but never below what the pump
// can hold with the step's throughput (a controller cannot go lower).
func (v *valve) held(sp *StepPlan, prev float64) {
	switch {
	case v.pump:
		sp.Pressure = sp.PumpLimit
	case sp.Step.Kind == KindLeakCheck:
		sp.Pressure = prev
	default:
		sp.Setpoint, sp.SetpointStep = v.pressure, v.from
		sp.Pressure = v.pressure
		if sp.TotalFlow > 0 {
			sp.Pressure = math.Max(v.pressure, sp.PumpLimit)
		}
	}
}

// step moves the valve state through step s: a pressure setting holds
// until the next one; a pump step opens to the pump, a vent closes it and
// (without a pressure of its own) brings the tube to atmosphere, and a
// leak check closes it.
func (v *valve) step(s *Step, i int) {
	if s.Pressure.IsSet() {
		v.pump = s.Pressure.Pump
		if !v.pump {
			v.pressure, v.from = s.Pressure.Setpoint.SI, i
		}
	}
	switch s.Kind {
	case KindPump:
		v.pump = true
	case KindVent:
		v.pump = false
		if !s.Pressure.IsSet() {
			v.pressure, v.from = atmosphere, i
		}
	case KindLeakCheck:
		v.pump = false
	}
}

// duration sets the duration of step i when the recipe gives it, or else
// derives it: a pump step's pump-down to its until pressure (at least 5 %
// above the pump limit), a cycle purge's cycles (CycleTime each), a
// vent's backfill to atmosphere at its flow. Other steps keep what
// temperatures set.
func (p *Plan) duration(i int) {
	sp, s, f := &p.Steps[i], p.Steps[i].Step, p.Furnace
	if !s.Duration.IsZero() {
		sp.Duration = s.Duration.SI
	} else if s.Kind == KindPump {
		sp.Duration = f.PumpDownTime(p.prevPressure(i), math.Max(s.Until.SI, sp.PumpLimit*1.05))
	}
	if s.Kind == KindPurge && s.Cycles > 0 {
		sp.CycleLow = f.CycleLowDefault()
		if !s.PumpTo.IsZero() {
			sp.CycleLow = s.PumpTo.SI
		}
		sp.CycleTime = f.CycleTime(s.Backfill.SI, sp.CycleLow, sp.TotalFlow)
		if s.Duration.IsZero() {
			sp.Duration = float64(s.Cycles) * sp.CycleTime
		}
	} else if s.Kind == KindVent && sp.TotalFlow > 0 {
		sp.Duration = f.TubeVolume() * math.Max(0, atmosphere-p.prevPressure(i)) / (sp.TotalFlow * gas.R * RoomTemperature)
	}
}

func (p *Plan) prevPressure(i int) float64 {
	if i == 0 {
		return atmosphere
	}
	return p.Steps[i-1].Pressure
}

// derive fills the flows, appended to buf[:0], and the pump-limited
// pressure. A gas the buffer already holds at the same place under the
// same symbol is taken from it instead of being looked up again (the same
// table entry: gas.Lookup of a symbol returns that gas).
func derive(sp *StepPlan, f *Furnace, buf []FlowPlan) {
	old := buf[:cap(buf)]
	if buf == nil {
		sp.Flows = make([]FlowPlan, 0, len(sp.Step.Flows)) // empty, not nil, without flows
	} else {
		sp.Flows = slices.Grow(buf[:0], len(sp.Step.Flows))
	}
	for j, fl := range sp.Step.Flows {
		if j < len(old) && old[j].Gas.Symbol == fl.Gas {
			sp.Flows = append(sp.Flows, FlowPlan{Gas: old[j].Gas, Molar: fl.Flow.SI})
			continue
		}
		g, err := gas.Lookup(fl.Gas)
		if err != nil {
			continue // validated at load; cannot happen for loaded recipes
		}
		sp.Flows = append(sp.Flows, FlowPlan{Gas: g, Molar: fl.Flow.SI})
	}
	refill(sp, f)
}

// gasPhase fills the numbers that need the step's pressure.
func gasPhase(sp *StepPlan, f *Furnace) {
	P, T := sp.Pressure, sp.MeanTemperature()
	var mixBuf [3][8]float64 // viscosities, molar masses, fractions; no allocation for up to 8 gases
	mus, ms, xs := mixBuf[0][:0], mixBuf[1][:0], mixBuf[2][:0]
	var h2, ch4 float64
	for i := range sp.Flows {
		fl := &sp.Flows[i]
		if sp.TotalFlow > 0 {
			fl.Fraction = fl.Molar / sp.TotalFlow
		}
		fl.Partial = fl.Fraction * P
		mus, ms, xs = append(mus, fl.Gas.Viscosity(T)), append(ms, fl.Gas.MolarMass.V), append(xs, fl.Fraction)
		switch fl.Gas.Symbol {
		case "H2":
			sp.PH2, h2 = fl.Partial, fl.Molar
		case "CH4":
			sp.PCH4, ch4 = fl.Partial, fl.Molar
		}
		if fl.Gas.Role == gas.CarbonSource {
			sp.PCarbon += fl.Partial
		}
	}
	sp.CH4H2Ratio = math.NaN()
	if h2 > 0 {
		sp.CH4H2Ratio = ch4 / h2
	}
	sp.Supersaturation = math.NaN()
	if sp.PCH4 > 0 {
		sp.Supersaturation = gas.Supersaturation(T, sp.PCH4, sp.PH2)
	}
	d := f.Tube.InnerDiameter.SI
	if sp.TotalFlow > 0 && P > 0 {
		sp.VolumetricFlow = sp.TotalFlow * gas.R * T / P
		area := math.Pi * d * d / 4
		sp.Velocity = sp.VolumetricFlow / area
		sp.Residence = f.Tube.HeatedLength.SI / sp.Velocity
		sp.Viscosity = gas.WilkeViscosity(mus, ms, xs)
		mm := 0.0
		for i := range xs {
			mm += xs[i] * ms[i]
		}
		rho := P * mm / (gas.R * T)
		sp.Reynolds = rho * sp.Velocity * d / sp.Viscosity
		sp.Knudsen = gas.MeanFreePath(sp.Viscosity, T, P, mm) / d
	}
	copper(sp, f, xs)
}

// CopperModel names the copper-loss model that applies to a step.
type CopperModel string

// The copper-loss models.
const (
	CopperVacuumBound CopperModel = "vacuum bound (Hertz–Knudsen)"
	CopperDiffusion   CopperModel = "diffusion-limited estimate (film model)"
)

// CopperDiffusionPressure: above this total pressure a step's copper loss
// is the diffusion-limited estimate. At 1 Torr the mean free path in Ar
// near 1000 °C, k_B·T/(√2·π·σ²·p), is about 0.3 mm, a fortieth of the
// 11 mm layer of the template tube: continuum diffusion holds. Below it the
// Hertz–Knudsen vacuum bound stands.
const CopperDiffusionPressure = torr // Pa

// copper fills the copper loss of a step by evaporation: the vacuum bound
// always, and above CopperDiffusionPressure the estimate limited by
// diffusion through a stagnant gas layer as thick as the tube's inner
// radius (gas.CopperDiffusionRecessionRate), never above the bound. xs are
// the feed's mole fractions in the order of sp.Flows.
func copper(sp *StepPlan, f *Furnace, xs []float64) {
	sp.CopperLossVacuum = copperLoss(sp.T0, sp.T1, sp.Duration, gas.CopperRecessionRate)
	sp.CopperLoss, sp.CopperModel = sp.CopperLossVacuum, CopperVacuumBound
	if sp.Pressure <= CopperDiffusionPressure {
		return
	}
	gs := make([]gas.Gas, len(sp.Flows))
	for i := range sp.Flows {
		gs[i] = sp.Flows[i].Gas
	}
	P, delta := sp.Pressure, f.CopperBoundaryLayer()
	sp.CopperLossDiffusion = copperLoss(sp.T0, sp.T1, sp.Duration, func(T float64) float64 {
		return gas.CopperDiffusionRecessionRate(gs, xs, T, P, delta)
	})
	sp.CopperLoss, sp.CopperModel = math.Min(sp.CopperLossDiffusion, sp.CopperLossVacuum), CopperDiffusion
}

// CopperBoundaryLayer returns the thickness δ (m) of the gas layer copper
// vapour diffuses through in the film model: the tube's inner radius (the
// foil lies near the axis, the vapour condenses on the cooler wall).
func (f *Furnace) CopperBoundaryLayer() float64 { return f.Tube.InnerDiameter.SI / 2 }

// copperLoss integrates a copper recession rate (m/s at temperature T)
// over the step (Simpson's rule over the linear temperature ramp) and
// returns the thickness lost per free face in m.
func copperLoss(T0, T1, dur float64, rate func(T float64) float64) float64 {
	if dur <= 0 {
		return 0
	}
	if T0 == T1 {
		return rate(T0) * dur
	}
	return simpson(rate, T0, T1, 16) / (T1 - T0) * dur // mean rate × time
}

// simpson returns ∫ f from a to b by Simpson's rule over n (even) panels.
func simpson(f func(float64) float64, a, b float64, n int) float64 {
	h := (b - a) / float64(n)
	sum := f(a) + f(b)
	for k := 1; k < n; k++ {
		w := 2.0
		if k%2 == 1 {
			w = 4
		}
		sum += w * f(a+float64(k)*h)
	}
	return sum * h / 3
}
