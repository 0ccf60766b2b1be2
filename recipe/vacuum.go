package recipe

import (
	"math"

	"github.com/foilrun/foilrun/recipe/gas"
)

// Vacuum arithmetic of a furnace: tube volume, conductance of the tube and
// pump line in viscous and molecular flow, the pressure the pump holds for
// a throughput, and pump-down time.
//
// Conductance of a long round tube of diameter d and length l:
//
//	viscous (Poiseuille):  C_v = π·d⁴·p̄ / (128·η·l)
//	molecular:             C_m = (π/12)·v̄·d³ / l,  v̄ = √(8RT/(πM))
//
// and in the transition range the sum C = C_v + C_m (an approximation
// that is exact in both limits). Throughput through one segment, with the
// viscous term integrated over the pressure drop:
//
//	Q = a·(p_u² − p_d²)/2 + C_m·(p_u − p_d),  a = π·d⁴/(128·η·l)
//
// solved in closed form for the upstream pressure p_u. The pump holds its
// inlet at p = p_base + Q/S.
//
// References:
//   - J. F. O'Hanlon, A User's Guide to Vacuum Technology, 3rd ed., Wiley
//     (2003), ch. 3 (gas flow, conductance) and ch. 4 (pumping speed).

// TubeVolume returns the inner volume of the whole tube, m³ (the tube
// length defaults to 1.5 × the heated length).
func (f *Furnace) TubeVolume() float64 {
	d := f.Tube.InnerDiameter.SI
	return math.Pi * d * d / 4 * f.tubeLength()
}

// HeatedVolume returns the inner volume of the heated zone, m³.
func (f *Furnace) HeatedVolume() float64 {
	d := f.Tube.InnerDiameter.SI
	return math.Pi * d * d / 4 * f.Tube.HeatedLength.SI
}

func (f *Furnace) tubeLength() float64 {
	if !f.Tube.Length.IsZero() {
		return f.Tube.Length.SI
	}
	return 1.5 * f.Tube.HeatedLength.SI
}

func (f *Furnace) lineGeometry() (d, l float64) {
	d, l = f.Tube.InnerDiameter.SI, DefaultLineLength
	if !f.Vacuum.LineDiameter.IsZero() {
		d = f.Vacuum.LineDiameter.SI
	}
	if !f.Vacuum.LineLength.IsZero() {
		l = f.Vacuum.LineLength.SI
	}
	return d, l
}

// mixProps returns viscosity and molar mass of a mixture at room
// temperature; nitrogen when no gas flows.
func mixProps(gs []gas.Gas, xs []float64) (eta, M float64) {
	if len(gs) == 0 {
		n2, _ := gas.Lookup("N2")
		return n2.Viscosity(RoomTemperature), n2.MolarMass.V
	}
	for i, g := range gs {
		M += xs[i] * g.MolarMass.V
	}
	return gas.MixtureViscosity(gs, xs, RoomTemperature), M
}

// ViscousConductance returns C_v = π·d⁴·p̄/(128·η·l) in m³/s.
func ViscousConductance(d, l, pMean, eta float64) float64 {
	return math.Pi * math.Pow(d, 4) * pMean / (128 * eta * l)
}

// MolecularConductance returns C_m = (π/12)·v̄·d³/l in m³/s, with the mean
// molecular speed v̄ = √(8RT/(πM)).
func MolecularConductance(d, l, T, M float64) float64 {
	vbar := math.Sqrt(8 * gas.R * T / (math.Pi * M))
	return math.Pi / 12 * vbar * d * d * d / l
}

// upstream returns the upstream pressure of a tube segment that carries
// throughput Q (Pa·m³/s) with downstream pressure pd.
func upstream(d, l, eta, M, pd, Q float64) float64 {
	a := math.Pi * math.Pow(d, 4) / (128 * eta * l)
	cm := MolecularConductance(d, l, RoomTemperature, M)
	K := a/2*pd*pd + cm*pd + Q
	return (-cm + math.Sqrt(cm*cm+2*a*K)) / a
}

// pumpLimit is PumpLimitedPressure for a step's flows, without
// allocating.
func (f *Furnace) pumpLimit(Q float64, fs []FlowPlan, total float64) float64 {
	if total <= 0 {
		return f.PumpLimitedPressure(Q, nil, nil)
	}
	var buf [3][8]float64
	mus, ms, xs := buf[0][:0], buf[1][:0], buf[2][:0]
	M := 0.0
	for _, fl := range fs {
		x := fl.Molar / total
		mus, ms, xs = append(mus, fl.Gas.Viscosity(RoomTemperature)), append(ms, fl.Gas.MolarMass.V), append(xs, x)
		M += x * fl.Gas.MolarMass.V
	}
	return f.pumpLimitWith(Q, gas.WilkeViscosity(mus, ms, xs), M)
}

// PumpLimitedPressure returns the lowest pressure at the foil (middle of
// the heated zone) that the pump can hold with throughput Q in Pa·m³/s of
// the gas mixture gs with mole fractions xs: the pump inlet sits at
// p_base + Q/S, then the pump line and half the tube each add their drop.
func (f *Furnace) PumpLimitedPressure(Q float64, gs []gas.Gas, xs []float64) float64 {
	eta, M := mixProps(gs, xs)
	return f.pumpLimitWith(Q, eta, M)
}

func (f *Furnace) pumpLimitWith(Q, eta, M float64) float64 {
	p := f.Vacuum.BasePressure.SI + Q/f.Vacuum.PumpSpeed.SI
	if Q <= 0 {
		return p
	}
	ld, ll := f.lineGeometry()
	p = upstream(ld, ll, eta, M, p, Q)
	p = upstream(f.Tube.InnerDiameter.SI, f.tubeLength()/2, eta, M, p, Q)
	return p
}

// EffectiveSpeed returns the pumping speed at the tube, m³/s, at mean
// pressure p for nitrogen: 1/S_eff = 1/S + 1/C_line + 1/C_tube.
func (f *Furnace) EffectiveSpeed(p float64) float64 {
	eta, M := mixProps(nil, nil)
	ld, ll := f.lineGeometry()
	c := func(d, l float64) float64 {
		return ViscousConductance(d, l, p, eta) + MolecularConductance(d, l, RoomTemperature, M)
	}
	return 1 / (1/f.Vacuum.PumpSpeed.SI + 1/c(ld, ll) + 1/c(f.Tube.InnerDiameter.SI, f.tubeLength()))
}

// PumpDownTime returns the time to pump the tube from p0 to p1 with no gas
// load, t = (V/S_eff)·ln(p0/p1), taking S_eff at p1 (the slowest point, so
// the estimate is long rather than short). Zero when p1 ≥ p0.
func (f *Furnace) PumpDownTime(p0, p1 float64) float64 {
	return PumpDown(f.TubeVolume(), f.EffectiveSpeed(p1), p0, p1)
}

// PumpDown returns the time to pump a volume V (m³) with speed S (m³/s)
// from p0 to p1 with no gas load: t = (V/S)·ln(p0/p1).
func PumpDown(V, S, p0, p1 float64) float64 {
	if p1 <= 0 || p1 >= p0 {
		return 0
	}
	return V / S * math.Log(p0/p1)
}

// CycleLowDefault is how far a pump-and-backfill cycle pumps down when the
// step gives no pump_to: the pump's limit with no flow (the purge gas is
// shut while pumping), which is its base pressure, plus the 5 % a
// pump-down never quite closes (the same margin as a pump step).
func (f *Furnace) CycleLowDefault() float64 { return 1.05 * f.PumpLimitedPressure(0, nil, nil) }

// CycleTime estimates one pump-and-backfill purge cycle, s: pump the tube
// from the backfill pressure high to low (Pa) with the purge gas shut,
// then refill to high at the step's molar flow ṅ (mol/s):
//
//	t = (V/S_eff)·ln(p_high/p_low) + V·(p_high − p_low)/(ṅ·R·T_room)
//
// No refill time without a flow.
func (f *Furnace) CycleTime(high, low, flow float64) float64 {
	t := f.PumpDownTime(high, low)
	if flow > 0 && high > low {
		t += f.TubeVolume() * (high - low) / (flow * gas.R * RoomTemperature)
	}
	return t
}
