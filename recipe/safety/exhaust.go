package safety

import (
	"fmt"
	"math"

	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/recipe/gas"
)

// exhaust judges each flammable step's outlet against the furnace's
// dilution flow, and the push-out of fuel by a purge that follows one.
func (a *analysis) exhaust() {
	D := a.p.Furnace.Exhaust.DilutionFlow.SI
	a.dilutionGas(D)
	worst, worstShare := -1, 0.0
	prevPhi, prevLFL := 0.0, 0.0
	for i := range a.p.Steps {
		sp := &a.p.Steps[i]
		phi, fuel, total, lfl, _ := a.fuelMix(sp.Flows)
		if phi > 0 {
			if share := a.outlet(i, fuel, total, lfl, D); share > worstShare {
				worst, worstShare = i, share
			}
			prevPhi, prevLFL = phi, lfl
			continue
		}
		// An inert step after a flammable one pushes the tube's fuel out.
		if prevPhi > 0 && sp.TotalFlow > 0 && sp.Step.Kind != recipe.KindVent {
			a.purgeSlug(i, prevPhi, prevLFL, D)
		}
		prevPhi = 0
	}
	if worst >= 0 && !hasStopRule(a.r.Findings, "exhaust.dilution") {
		st := a.r.Steps[worst]
		k := a.o.ExhaustLimit
		a.add(Note, &a.p.Steps[worst], "exhaust.outlet", "keep the exhaust dilution flowing whenever flammable gas does; check its flow meter before the run",
			"highest exhaust fuel is in this step: %.3g %% of LFL with the furnace's %.3g slm dilution (limit %.0f %%; %.3g slm needed)",
			st.Exhaust*100, slm(D), k*100, st.DilutionSLM).num("outlet", st.Exhaust*100, "% LFL").num("dilution needed", st.DilutionSLM, "slm")
	}
}

// dilutionGas warns when the exhaust is diluted (flow D > 0, mol/s) with
// a gas that is not inert; the dilution gas defaults to N2.
func (a *analysis) dilutionGas(D float64) {
	dgas := a.p.Furnace.Exhaust.DilutionGas
	if dgas == "" {
		dgas = "N2"
	}
	if g, err := gas.Lookup(dgas); err == nil && g.Role != gas.Inert && D > 0 {
		a.add(Warning, nil, "exhaust.dilution-gas", "dilute the exhaust with an inert gas (N2 or Ar), or have the site's gas-safety review approve this",
			"the exhaust dilution gas %s is not inert", g.Symbol)
	}
}

// outlet records the exhaust share of LFL of flammable step i,
//
//	share = fuel / (total + D) / LFL
//
// (fuel and total feed, D the dilution, mol/s), and the dilution it needs
// (DilutionNeeded), with a stop when the furnace's dilution falls short.
// It returns the share.
func (a *analysis) outlet(i int, fuel, total, lfl, D float64) float64 {
	sp, st, k := &a.p.Steps[i], &a.r.Steps[i], a.o.ExhaustLimit
	need := DilutionNeeded(fuel, total, lfl, k)
	share := fuel / (total + D) / lfl
	st.Exhaust, st.DilutionSLM = share, slm(need)
	if need > D {
		got, limit := pctApart(share, k)
		a.add(Stop, sp, "exhaust.dilution", fmt.Sprintf("raise the exhaust dilution to at least %.3g slm of inert gas, or lower the fuel flow", slm(need)),
			"the pump outlet carries %.3g sccm fuel in %.3g sccm; holding it below %s of its LFL %s needs %.3g slm inert dilution, the furnace provides %.3g slm: the outlet reaches %s of LFL",
			fuel/gas.MolPerSCCMPerSecond, total/gas.MolPerSCCMPerSecond, limit, pct(lfl), slm(need), slm(D), got).
			num("dilution needed", slm(need), "slm").num("dilution fitted", slm(D), "slm").num("outlet", share*100, "% LFL")
	}
	return share
}

// purgeSlug judges inert step i pushing out the fuel the flammable step
// before it left in the tube (fuel fraction prevPhi, LFL prevLFL) and
// records it (Slug). The fuel the tube holds is its inventory at the
// previous step's pressure, counted at room temperature (the cold gas
// holds the most):
//
//	n_fuel = φ·p_prev·V / (R·T_room)
//
// The purge sweeps the well-mixed tube with the outflow ṅ_out (its own
// flow, or when it opens a fuller tube to the pump, the pump's draw
// S_eff·p_prev/(R·T_room) if larger); the tube then holds
// n_tube = max(p_prev, p)·V/(R·T_room) and the fuel leaves as
//
//	ṅ_fuel(t) = (n_fuel/τ)·e^(−t/τ),  τ = n_tube/ṅ_out (= V/Q)
//
// so its peak is n_fuel/τ, never more than the inventory allows. The
// dilution needed to hold that peak below ExhaustLimit of the LFL follows
// (DilutionNeeded). A shortfall of dilution D is a warning, a note when τ
// is under slugTime.
func (a *analysis) purgeSlug(i int, prevPhi, prevLFL, D float64) {
	sp, prev, k := &a.p.Steps[i], &a.p.Steps[i-1], a.o.ExhaustLimit
	f := a.p.Furnace
	molar := f.TubeVolume() / (gas.R * recipe.RoomTemperature) // mol per Pa of tube pressure
	nFuel := prevPhi * prev.Pressure * molar
	out := sp.TotalFlow
	if sp.OpenToPump && sp.Pressure < prev.Pressure {
		out = math.Max(out, f.EffectiveSpeed(prev.Pressure)*prev.Pressure/(gas.R*recipe.RoomTemperature))
	}
	tau := math.Max(prev.Pressure, sp.Pressure) * molar / out
	peak := nFuel / tau
	need := DilutionNeeded(peak, out, prevLFL, k)
	a.r.Steps[i].Slug = &Slug{TubeFuelSCC: nFuel / molPerSCC, PeakSCCM: peak / gas.MolPerSCCMPerSecond,
		TimeConstant: tau, DilutionSLM: slm(need)}
	if need <= D {
		return
	}
	sev := Warning
	if tau < slugTime {
		sev = Note
	}
	a.add(sev, sp, "exhaust.purge-slug", "ramp the purge flow up slowly, or raise the exhaust dilution, so the tube's fuel leaves diluted",
		"the tube holds %.3g scc of fuel from the step before (%s at %s); the purge pushes it out at up to %.3g sccm, falling with time constant %.2g s; %.3g slm dilution would hold it below %.0f %% of LFL, the furnace provides %.3g slm",
		nFuel/molPerSCC, pct(prevPhi), pressureText(prev.Pressure), peak/gas.MolPerSCCMPerSecond, tau, slm(need), k*100, slm(D)).
		num("fuel in tube", nFuel/molPerSCC, "scc").num("peak fuel", peak/gas.MolPerSCCMPerSecond, "sccm").
		num("time constant", tau, "s").num("dilution needed", slm(need), "slm")
}

// molPerSCC is one standard cubic centimetre (0 °C, 101 325 Pa) in mol.
const molPerSCC = gas.MolPerSCCMPerSecond * 60

// hasStopRule reports whether a stop-level finding of the rule is present.
func hasStopRule(fs []Finding, rule string) bool {
	for _, f := range fs {
		if f.Severity == Stop && f.Rule == rule {
			return true
		}
	}
	return false
}
