package safety

import (
	"fmt"
	"math"
	"strings"

	"github.com/foilrun/foilrun/recipe"
)

// Sheet is the content of the printed pre-run checklist: every line
// already worded, so the text and Markdown templates only lay it out.
type Sheet struct {
	Recipe, Furnace, Site string
	GasCode               string
	Contacts              []string
	Stops                 []string // stop-level findings, to resolve before the run
	Before, During, After []string // checklist items, each gets a box
	Numbers               []string // the computed figures the items rely on
	Verdict               string
	Disclaimer            string
}

// NewSheet words the checklist of a plan in its site from its report.
func NewSheet(p *recipe.Plan, s *recipe.Site, r *Report) Sheet {
	sh := Sheet{Recipe: r.Recipe, Furnace: r.Furnace, Site: r.Site, GasCode: s.GasCode, Contacts: s.Contacts,
		Verdict: r.Verdict, Disclaimer: Disclaimer}
	for _, f := range r.Findings {
		if f.Severity == Stop {
			where := "run"
			if f.StepName != "" {
				where = "step " + f.StepName
			}
			sh.Stops = append(sh.Stops, fmt.Sprintf("%s (%s): %s → %s", where, f.Rule, f.Message, f.Action))
		}
	}
	fuels, inerts := gasesOf(p)
	sh.before(p, s, r, fuels, inerts)
	sh.during(s, fuels, inerts)
	sh.after(r)
	sh.numbers(s, r)
	return sh
}

// item appends one formatted item to a list of the sheet.
func item(list *[]string, format string, args ...any) {
	*list = append(*list, fmt.Sprintf(format, args...))
}

// before words the items to tick before the run: leak check, the purges
// up to the first fuel, the tube's O2 then, the detectors, the exhaust,
// the cylinders and the people.
func (sh *Sheet) before(p *recipe.Plan, s *recipe.Site, r *Report, fuels, inerts []string) {
	if r.LeakCheckStep > 0 {
		item(&sh.Before, "Leak check (step %d): valves closed, pressure rise at most %s over %s; do not go on if it fails", r.LeakCheckStep, r.LeakCheckPass, r.LeakCheckTime)
	} else {
		item(&sh.Before, "Leak check: the recipe has none; add one before any flammable gas")
	}
	for _, pg := range r.Purges {
		if r.FirstFuelStep > 0 && pg.Step > r.FirstFuelStep {
			break
		}
		item(&sh.Before, "Purge, step %s: %s; tube O2 left %s", pg.Label, purgeText(pg), ppm(pg.OxygenAfter))
	}
	if r.FirstFuelStep > 0 && r.LeakOxygenAtFuel > 0 {
		item(&sh.Before, "Tube O2 when fuel first enters (step %d): %s left by the purge, plus %s from a leak at the pass figure %s: about %s (target at most %s)",
			r.FirstFuelStep, ppm(r.OxygenAtFuel), ppm(r.LeakOxygenAtFuel), r.LeakCheckPass, ppm(r.OxygenAtFuel+r.LeakOxygenAtFuel), pct(r.Options.PurgeTarget))
	} else if r.FirstFuelStep > 0 {
		item(&sh.Before, "Tube O2 when fuel first enters (step %d): %s (target at most %s)", r.FirstFuelStep, ppm(r.OxygenAtFuel), pct(r.Options.PurgeTarget))
	}
	for _, d := range s.Detectors {
		sh.Before = append(sh.Before, detectorItem(d))
	}
	ex := p.Furnace.Exhaust
	need := 0.0
	for _, st := range r.Steps {
		need = math.Max(need, st.DilutionSLM)
	}
	item(&sh.Before, "Exhaust to %s drawing; dilution %s flowing at %.3g slm (at least %.3g slm needed)", s.Exhaust, orN2(ex.DilutionGas), slm(ex.DilutionFlow.SI), need)
	item(&sh.Before, "Cylinders: only %s open, secured, regulators and fittings leak-tested", strings.Join(append(fuels, inerts...), ", "))
	item(&sh.Before, "People told: the contacts below and everyone in the room know the gases, the times and the alarm actions")
}

// detectorItem words the check of one gas detector and its alarm points
// (in % of LFL, or % O2 for an oxygen detector).
func detectorItem(d recipe.Detector) string {
	unit := " LFL"
	if d.Gas == "O2" {
		unit = " O2"
	}
	var als []string
	for _, a := range d.Alarms {
		als = append(als, pct(a.SI)+unit)
	}
	at := ""
	if d.Where != "" {
		at = " (" + d.Where + ")"
	}
	return fmt.Sprintf("%s detector%s working and in calibration; alarms at %s", d.Gas, at, strings.Join(als, ", "))
}

// during words what to watch during the run and what to do on an alarm.
func (sh *Sheet) during(s *recipe.Site, fuels, inerts []string) {
	item(&sh.During, "Watch temperature, pressure and each flow against the plan; shut the fuel on any unexplained pressure rise")
	item(&sh.During, "Keep the exhaust dilution on whenever flammable gas flows")
	if len(fuels) > 0 {
		item(&sh.During, "On a fuel (%s) alarm: shut the fuel cylinder valves, keep inert flow and ventilation on, leave, call the contacts", strings.Join(fuels, "/"))
	}
	if len(inerts) > 0 || s.Detectors != nil {
		item(&sh.During, "On an oxygen alarm: leave the room at once; re-enter only when the site allows")
	}
}

// after words the purges after the first fuel, the cool-down and vent,
// and the closing of the cylinders.
func (sh *Sheet) after(r *Report) {
	for _, pg := range r.Purges {
		if r.FirstFuelStep > 0 && pg.Step > r.FirstFuelStep {
			item(&sh.After, "Purge, step %s: %s; fuel left %s", pg.Label, purgeText(pg), ppm(pg.FuelAfter))
		}
	}
	if r.VentStep > 0 {
		item(&sh.After, "Cool below %.0f °C before venting and opening (vent planned at %.0f °C); fuel at opening %.2g %% of LFL (limit %.0f %%)",
			r.OpenBelowC, r.VentTempC, r.FuelAtOpen*100, r.Options.VentTarget*100)
	} else {
		item(&sh.After, "Cool below %.0f °C and purge with inert gas before opening (the recipe has no vent step)", r.OpenBelowC)
	}
	item(&sh.After, "Close the fuel cylinders, leave the inert line as the site requires, log the run")
}

// numbers words the computed figures the items rely on: tube and room,
// each release, the exhaust outlet, the leak's O2 and the purge rule.
func (sh *Sheet) numbers(s *recipe.Site, r *Report) {
	item(&sh.Numbers, "tube volume %.3g L; room %.0f m3 ventilated at %.0f m3/h (well mixed); limits from %s", r.TubeLitres, s.Room.Volume.SI, r.VentilationM3H, r.Compilation)
	for _, rel := range r.Releases {
		if rel.ShareOfLFL > 0 {
			item(&sh.Numbers, "%s leak at %.3g slm (%s): room steady state %.3g %% of LFL%s", rel.Gas, rel.FlowSLM, rel.Source, rel.ShareOfLFL*100, firstAlarm(rel))
		} else {
			o2, _ := pctApart(rel.Oxygen, r.OxygenLimit)
			item(&sh.Numbers, "%s leak at %.3g slm (%s): room O2 falls to %s", rel.Gas, rel.FlowSLM, rel.Source, o2)
		}
	}
	if len(r.Releases) > 0 {
		item(&sh.Numbers, "oxygen-deficient below %s (%s)", pct(r.OxygenLimit), r.OxygenSource)
	}
	worst := 0.0
	for _, st := range r.Steps {
		worst = math.Max(worst, st.Exhaust)
	}
	if worst > 0 {
		item(&sh.Numbers, "exhaust outlet at most %.3g %% of LFL with the fitted dilution (limit %.0f %%)", worst*100, r.Options.ExhaustLimit*100)
	}
	if r.LeakOxygenPPM > 0 {
		item(&sh.Numbers, "a leak at the pass figure would bring about %.2g ppm O2 into the smallest fuel flow", r.LeakOxygenPPM)
	}
	item(&sh.Numbers, "purge rule: N = ln(C0/C) volume changes (air to 1 %% O2: 3.04), or (P_low/P_high)^n per cycle")
}

func firstAlarm(rel Release) string {
	if len(rel.Alarms) == 0 {
		return "; no detector"
	}
	al := rel.Alarms[0]
	if al.Seconds < 0 {
		return fmt.Sprintf("; %s alarm never reached", pct(al.Alarm))
	}
	return fmt.Sprintf("; %s alarm after %s", pct(al.Alarm), minutes(al.Seconds))
}

func purgeText(pg Purge) string {
	if pg.Evacuations > 0 {
		return fmt.Sprintf("%d evacuation%s to %s, which the site counts as the purge, leaving p_low/p_high = %.2g of the air", pg.Evacuations, plural(pg.Evacuations), pressureText(pg.LowPa), pg.Factor)
	}
	if pg.Cycles > 0 {
		return fmt.Sprintf("tube holds %s O2 at %s before the cycles; %d pump-and-backfill cycles %s to %s (%s each), each leaving P_low/P_high = %.2g of the gas before it, (P_low/P_high)^%d = %.2g",
			ppm(pg.OxygenBefore), pressureText(pg.StartPa), pg.Cycles, pressureText(pg.LowPa), pressureText(pg.HighPa), minutes(pg.CycleSeconds), pg.PerCycle, pg.Cycles, pg.Factor)
	}
	return fmt.Sprintf("%s tube volumes flow-through (at least 3.04 for 1 %% O2 from air)", count(pg.Exchanges))
}

// pressureText writes a pressure in kPa near atmosphere, else Pa.
func pressureText(pa float64) string {
	if pa >= 1000 {
		return trim(fmt.Sprintf("%.3g kPa", pa/1000))
	}
	return trim(fmt.Sprintf("%.3g Pa", pa))
}

func ppm(x float64) string {
	if x >= 0.01 {
		return pct(x)
	}
	if x < 1e-9 {
		return "below 0.001 ppm"
	}
	return trim(fmt.Sprintf("%.2g ppm", x*1e6))
}

func orN2(s string) string {
	if s == "" {
		return "N2"
	}
	return s
}

// gasesOf returns the flammable and the inert gases the plan flows.
func gasesOf(p *recipe.Plan) (fuels, inerts []string) {
	seen := map[string]bool{}
	for _, sp := range p.Steps {
		for _, f := range sp.Flows {
			if f.Molar <= 0 || seen[f.Gas.Symbol] {
				continue
			}
			seen[f.Gas.Symbol] = true
			if f.Gas.Flammable {
				fuels = append(fuels, f.Gas.Symbol)
			} else {
				inerts = append(inerts, f.Gas.Symbol)
			}
		}
	}
	return fuels, inerts
}

// count formats a number of exchanges: whole above 100, three digits below.
func count(x float64) string {
	if x >= 100 {
		return fmt.Sprintf("%.0f", x)
	}
	return fmt.Sprintf("%.3g", x)
}
