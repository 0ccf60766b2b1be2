package safety

import "math"

// SteadyConcentration returns the well-mixed steady-state room
// concentration C_ss = G/Q (volume fraction, at most 1) of a release of G
// m³/s into a room ventilated at Q m³/s (Q already divided by any
// non-ideal mixing factor's inverse; see the package doc).
func SteadyConcentration(G, Q float64) float64 {
	if Q <= 0 {
		return 1
	}
	return math.Min(1, G/Q)
}

// RoomConcentration returns C(t) = (G/Q)(1 − exp(−Q·t/V)) for a release of
// G m³/s that starts at t = 0 into a clean room of volume V m³ ventilated
// at Q m³/s (well-mixed model, Crowl & Louvar ch. 3).
func RoomConcentration(G, Q, V, t float64) float64 {
	return SteadyConcentration(G, Q) * (1 - math.Exp(-Q*t/V))
}

// TimeToConcentration returns the time in s for a release of G m³/s into a
// room of V m³ ventilated at Q m³/s to reach concentration C:
//
//	t = −(V/Q)·ln(1 − C/C_ss)
//
// and +Inf when C ≥ C_ss (never reached).
func TimeToConcentration(C, G, Q, V float64) float64 {
	css := SteadyConcentration(G, Q)
	if C >= css {
		return math.Inf(1)
	}
	if C <= 0 {
		return 0
	}
	return -V / Q * math.Log(1-C/css)
}

// OxygenAfter returns the oxygen fraction of room air that holds inert
// fraction c: O2 = 0.209476·(1 − c).
func OxygenAfter(c float64) float64 { return airOxygen * (1 - c) }
