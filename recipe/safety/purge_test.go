package safety_test

import (
	"path/filepath"
	"strings"
	"testing"

	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/recipe/safety"
)

// analyzeYAML parses a recipe written in the test, on the template furnace
// and site (its furnace and site paths resolve beside the templates), the
// site changed by edits.
func analyzeYAML(tb testing.TB, text string, edits ...func(*recipe.Site)) (*recipe.Plan, *recipe.Site, *safety.Report) {
	tb.Helper()
	r, err := recipe.ParseRecipe("test.yaml", []byte(text))
	if err != nil {
		tb.Fatal(err)
	}
	r.File = filepath.Join(root, "templates", "test.yaml")
	return analyzeRecipe(tb, r, edits...)
}

// recipeHead is the start of the test recipes: pump down to 20 mTorr and
// leak-check, on the template furnace and site.
const recipeHead = `name: test
furnace: furnace.yaml
site: site.yaml
substrate: {material: copper foil, thickness: 25 um}
steps:
  - {kind: pump, until: 20 mTorr}
  - {kind: leak-check, duration: 5 min, max_rise: 5 mTorr/min}
`

// recipeTail heats in Ar/H2 at 1 atm, cools, purges and vents.
const recipeTail = `  - {kind: ramp, to: 1000 C, rate: 20 C/min, flows: {Ar: 500 sccm, H2: 25 sccm}, pressure: 101 kPa}
  - {kind: cool, to: 50 C, rate: 5 C/min, flows: {Ar: 500 sccm}}
  - {kind: purge, duration: 10 min, flows: {Ar: 1 slm}}
  - {kind: vent, flows: {Ar: 500 sccm}}
`

// cycledRecipe runs three pump-and-backfill cycles to pumpTo (no pump_to
// line when empty) between recipeHead and recipeTail.
func cycledRecipe(pumpTo string) string {
	line := ""
	if pumpTo != "" {
		line = "\n    pump_to: " + pumpTo
	}
	return recipeHead + `  - kind: purge
    flows: {Ar: 1 slm}
    cycles: 3
    backfill: 101 kPa` + line + "\n" + recipeTail
}

// TestCyclePurgeByHand: n cycles between P_low and P_high leave
// (P_low/P_high)^n of the gas (Crowl & Louvar, Chemical Process Safety,
// 2nd ed., vacuum purging). Hand values: 12.2 kPa → 101 kPa:
// 12.2/101 = 0.120792, cubed 1.76244e-3; 10 Pa → 101 kPa: 9.90099e-5,
// cubed 9.70590e-13; the default pumps to 1.05 × the 5 mTorr base
// pressure = 0.699942 Pa: 6.93012e-6 per cycle, cubed 3.32828e-16. The
// tube begins the cycles holding air (20.95 % O2, NASA Glenn air
// composition) at the leak check's end pressure; the first cycle then
// starts from there, so the O2 left is 0.2095·(P_start/P_high)·r².
func TestCyclePurgeByHand(t *testing.T) {
	cases := []struct {
		name, pumpTo     string
		perCycle, factor float64
		wantLowPa        float64
	}{
		{"12.2 kPa", "12.2 kPa", 0.120792, 1.76244e-3, 12200},
		{"10 Pa", "10 Pa", 9.90099e-5, 9.70590e-13, 10},
		{"default near base", "", 6.93012e-6, 3.32828e-16, 0.699942},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			_, _, rep := analyzeYAML(t, cycledRecipe(c.pumpTo))
			if len(rep.Purges) == 0 || rep.Purges[0].Cycles != 3 {
				t.Fatalf("got purges %+v, want the cycled purge first", rep.Purges)
			}
			pg := rep.Purges[0]
			near(t, "P_low", pg.LowPa, c.wantLowPa, 1e-5)
			near(t, "P_low/P_high", pg.PerCycle, c.perCycle, 1e-5)
			near(t, "(P_low/P_high)^3", pg.Factor, c.factor, 1e-5)
			near(t, "O2 before the cycles", pg.OxygenBefore, 0.209476, 1e-4)
			r := pg.LowPa / pg.HighPa
			start := min(pg.StartPa, pg.LowPa)
			near(t, "O2 after", pg.OxygenAfter, pg.OxygenBefore*start/pg.HighPa*r*r, 1e-6)
			if pg.CycleSeconds <= 0 {
				t.Errorf("cycle time %g s, want a positive time", pg.CycleSeconds)
			}
		})
	}
}

// The checklist line names the starting content and the factor per cycle
// apart, so the O2 left is not credited to the cycles alone.
func TestCyclePurgeChecklist(t *testing.T) {
	p, s, rep := analyzeYAML(t, cycledRecipe("12.2 kPa"))
	sh := safety.NewSheet(p, s, rep)
	var line string
	for _, it := range sh.Before {
		if strings.Contains(it, "pump-and-backfill") {
			line = it
		}
	}
	for _, want := range []string{"before the cycles", "12.2 kPa to 101 kPa", "each leaving P_low/P_high = 0.12", "(P_low/P_high)^3 = 0.0018"} {
		if !strings.Contains(line, want) {
			t.Errorf("checklist line %q lacks %q", line, want)
		}
	}
}

// slugRecipe runs H2 at 20 sccm held at prevP, then an Ar purge at purgeP.
func slugRecipe(prevP, purgeFlow, purgeP string) string {
	return recipeHead + `  - {kind: purge, duration: 10 min, flows: {Ar: 500 sccm}, pressure: pump}
  - {kind: anneal, temperature: 25 C, duration: 10 min, flows: {H2: 20 sccm}, pressure: ` + prevP + `}
  - {kind: purge, duration: 10 min, flows: {Ar: ` + purgeFlow + `}, pressure: ` + purgeP + `}
  - {kind: vent, flows: {Ar: 500 sccm}, pressure: 1 atm}
`
}

// TestPurgeSlugByHand: the fuel a purge pushes out is bounded by the
// tube's inventory. Template tube V = π/4·(22 mm)²·1000 mm = 3.80133e-4 m³;
// at T_room = 293.15 K, V/(R·T) = 1.559593e-7 mol/Pa; 1 scc = 4.461503e-5
// mol and 1 sccm = 7.435839e-7 mol/s (SEMI 0 °C reference). Hand values:
//
//	50 Pa of H2, purge 500 sccm Ar at 1000 Pa: n = 7.79796e-6 mol =
//	0.174783 scc; τ = 1000·1.559593e-7/3.71792e-4 = 0.419480 s; peak =
//	n/τ = 1.85896e-5 mol/s = 25.0000 sccm (= 500·50/1000); dilution to
//	25 % of the 4 % LFL (NFPA 497): 25/0.01 − 500 = 2000 sccm = 2.0 slm,
//	within the furnace's 20 slm: no finding (the old rule asked 49.5 slm).
//	101325 Pa of H2, purge 1 slm Ar at 101325 Pa: n = 0.0158026 mol =
//	354.198 scc; τ = 21.2519 s; peak = 1000 sccm; dilution 99 slm, a
//	warning. (Hand arithmetic, checked in python3; tolerance 1e-5.)
//	101325 Pa of H2 opened to the pump with 500 sccm Ar: the tube empties
//	at the pump's speed (S = 5.5 m³/h = 1.52778e-3 m³/s; the line's and
//	tube's viscous conductances at 1 atm are three orders larger, so
//	S_eff = S within 0.5 %): τ = V/S = 0.248814 s, peak = S·p/(R·T) =
//	0.0635116 mol/s = 85 413 sccm, dilution 8456 slm; τ under 1 s: a note.
//	(Tolerance 0.5 % for this case.)
func TestPurgeSlugByHand(t *testing.T) {
	cases := []struct {
		name                   string
		prevP, flow, purgeP    string
		scc, tau, peak, dilSLM float64
		finding                bool
	}{
		{"pumped H2 then 1000 Pa purge", "50 Pa", "500 sccm", "1000 Pa", 0.174783, 0.419480, 25.0000, 2.0, false},
		{"full tube of H2 at 1 atm", "101325 Pa", "1 slm", "101325 Pa", 354.198, 21.2519, 1000, 99, true},
		{"full tube of H2 opened to the pump", "101325 Pa", "500 sccm", "pump", 354.198, 0.248814, 85413, 8456, true},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			_, _, rep := analyzeYAML(t, slugRecipe(c.prevP, c.flow, c.purgeP))
			sl := rep.Steps[4].Slug
			if sl == nil {
				t.Fatal("got no purge slug on step 5")
			}
			tol := 1e-5
			if c.purgeP == "pump" {
				tol = 5e-3 // S_eff ≈ S
			}
			near(t, "tube fuel scc", sl.TubeFuelSCC, c.scc, 1e-5)
			near(t, "time constant s", sl.TimeConstant, c.tau, tol)
			near(t, "peak sccm", sl.PeakSCCM, c.peak, tol)
			near(t, "dilution slm", sl.DilutionSLM, c.dilSLM, tol)
			got := false
			for _, f := range rep.Findings {
				if f.Rule == "exhaust.purge-slug" && f.Step == 5 {
					got = true
				}
			}
			if got != c.finding {
				t.Errorf("purge-slug finding on step 5: got %v, want %v\n%s", got, c.finding, listing(rep.Findings))
			}
		})
	}
}

// evacuatedRecipe pumps to 20 mTorr, leak-checks and admits H2 at 1 atm
// with no inert purge.
const evacuatedRecipe = recipeHead + recipeTail

// TestPurgeByEvacuation: with the site's purge_by_evacuation the pump-down
// counts as the purge, shown with its factor p_low/p_high = 20 mTorr /
// 760 Torr = 2.63158e-5 (hand calculation; Crowl & Louvar, vacuum
// purging); without it, or with fewer evacuations than min_cycles, the
// first fuel is a stop as before.
func TestPurgeByEvacuation(t *testing.T) {
	cases := []struct {
		name   string
		policy *recipe.EvacuationPolicy
		purged bool
	}{
		{"no policy", nil, false},
		{"allowed, 1 cycle", &recipe.EvacuationPolicy{Allowed: true, MinCycles: 1}, true},
		{"allowed, default 2 cycles", &recipe.EvacuationPolicy{Allowed: true}, false},
		{"not allowed", &recipe.EvacuationPolicy{Allowed: false, MinCycles: 1}, false},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			p, _, rep := analyzeYAML(t, evacuatedRecipe, func(s *recipe.Site) { s.PurgeByEvacuation = c.policy })
			stop, note := false, false
			for _, fd := range rep.Findings {
				stop = stop || fd.Rule == "sequence.inert-purge" && fd.Severity == safety.Stop
				note = note || fd.Rule == "sequence.evacuation-purge"
			}
			checkErr := false
			for _, fd := range recipe.Check(p) {
				checkErr = checkErr || fd.Rule == "sequence.inert-purge" && fd.Severity == recipe.Error
			}
			if stop == c.purged || note != c.purged || checkErr == c.purged {
				t.Fatalf("safety stop %v, note %v, check error %v; want purged = %v\n%s", stop, note, checkErr, c.purged, listing(rep.Findings))
			}
			if !c.purged {
				return
			}
			pg := rep.Purges[0]
			if pg.Evacuations != 1 || pg.Step != 1 {
				t.Errorf("purge record %+v, want 1 evacuation at step 1", pg)
			}
			near(t, "evacuation factor", pg.Factor, 2.63158e-5, 1e-5)
			// The ramp fills the tube from 20 mTorr (2.666447 Pa) to 101 kPa with
			// Ar/H2: 0.209476·2.666447/101000 = 5.53027e-6 O2.
			near(t, "O2 at first fuel", rep.OxygenAtFuel, 5.53027e-6, 1e-5)
		})
	}
}
