package kinetics

// ClosedRun is what the fit's closed form (see closedForm) uses of a
// prepared run whose only carbon step is at constant temperature in
// continuous mode:
//
//	ln I = ln I0 − En·U + a·LnPC − b·LnPH
//	ln G = ln G0 − Eg·U + LnDP − LnPH/2
//	X = κ·I·G²·t³/3,  N = I·c^(−1/3)·Γ(4/3)·P(1/3, X),  c = κ·I·G²/3
//
// with U = 1/(k·T) (1/eV), LnPC = ln(pC/p0), LnPH = ln(max(pH, floor)/p0)
// and LnDP = ln((pC − pCeq)/p0), for an independent implementation of the
// fit (the scipy reference of the benchmarks).
type ClosedRun struct {
	U, LnPC, LnPH, LnDP float64
	Duration            float64 // t, s
	Kappa               float64 // κ of the shape
	Etch                bool    // pC ≤ pCeq: nothing grows, X = N = 0
}

// ClosedRun returns the closed-form inputs of the run, and false when its
// profile has no closed form (a ramp with methane, more than one carbon
// step, or site-saturated nucleation).
func (pr *Prepared) ClosedRun() (ClosedRun, bool) {
	if !pr.closed() {
		return ClosedRun{}, false
	}
	ps := &pr.segs[0]
	c := ps.iso
	return ClosedRun{U: c.u, LnPC: c.lpc, LnPH: c.lph, LnDP: c.ldp, Duration: ps.duration, Kappa: pr.Shape.Kappa(), Etch: c.etch}, true
}
