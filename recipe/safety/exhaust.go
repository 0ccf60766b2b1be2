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
		a.add(Stop, sp, "exhaust.dilution", fmt.Sprintf("raise the exhaust dilution to at least %.3g slm of inert gas, or lower the fuel flow", slm(need)),
			"the pump outlet carries %.3g sccm fuel in %.3g sccm; holding it below %.0f %% of its LFL %s needs %.3g slm inert dilution, the furnace provides %.3g slm: the outlet reaches %.0f %% of LFL",
			fuel/gas.MolPerSCCMPerSecond, total/gas.MolPerSCCMPerSecond, k*100, pct(lfl), slm(need), slm(D), share*100).
			num("dilution needed", slm(need), "slm").num("dilution fitted", slm(D), "slm").num("outlet", share*100, "% LFL")
	}
	return share
}

// purgeSlug judges inert step i pushing out the fuel the flammable step
// before it left in the tube (fuel fraction prevPhi, LFL prevLFL): the
// outlet first carries up to prevPhi of the purge flow, falling with the
// tube's time constant τ = P·V/(R·T_room)/ṅ. A shortfall of dilution D is
// a warning, a note when τ is under slugTime.
func (a *analysis) purgeSlug(i int, prevPhi, prevLFL, D float64) {
	sp, prev, k := &a.p.Steps[i], &a.p.Steps[i-1], a.o.ExhaustLimit
	peakFuel := prevPhi * sp.TotalFlow
	need := DilutionNeeded(peakFuel, sp.TotalFlow, prevLFL, k)
	P := math.Max(prev.Pressure, sp.Pressure)
	tau := P * a.p.Furnace.TubeVolume() / (gas.R * recipe.RoomTemperature) / sp.TotalFlow
	if need <= D {
		return
	}
	sev := Warning
	if tau < slugTime {
		sev = Note
	}
	a.add(sev, sp, "exhaust.purge-slug", "ramp the purge flow up slowly, or raise the exhaust dilution, so the tube's fuel leaves diluted",
		"the purge first pushes out the tube's fuel at up to %.3g sccm (falling with time constant %.2g s); %.3g slm dilution would hold it below %.0f %% of LFL, the furnace provides %.3g slm",
		peakFuel/gas.MolPerSCCMPerSecond, tau, slm(need), k*100, slm(D)).
		num("peak fuel", peakFuel/gas.MolPerSCCMPerSecond, "sccm").num("time constant", tau, "s").num("dilution needed", slm(need), "slm")
}

// hasStopRule reports whether a stop-level finding of the rule is present.
func hasStopRule(fs []Finding, rule string) bool {
	for _, f := range fs {
		if f.Severity == Stop && f.Rule == rule {
			return true
		}
	}
	return false
}
