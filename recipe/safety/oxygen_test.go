package safety_test

import (
	"math"
	"path/filepath"
	"strings"
	"testing"

	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/recipe/safety"
)

// analyzeWithSite analyses the low-pressure template on the template
// furnace with a site changed by edit.
func analyzeWithSite(t *testing.T, edit func(*recipe.Site)) *safety.Report {
	t.Helper()
	r, err := recipe.LoadRecipe(filepath.Join(root, "templates", "recipe-lowpressure.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	_, _, rep := analyzeRecipe(t, r, edit)
	return rep
}

func oxygenFindings(rep *safety.Report) []safety.Finding {
	var out []safety.Finding
	for _, f := range rep.Findings {
		if f.Rule == "room.oxygen" {
			out = append(out, f)
		}
	}
	return out
}

// TestOxygenLevelFromSite: the site's oxygen.deficient_below and its
// source replace the default; without it the default names itself as
// the default and its source (US OSHA 29 CFR 1910.134, 19.5 %).
func TestOxygenLevelFromSite(t *testing.T) {
	def := analyzeWithSite(t, func(s *recipe.Site) { s.Oxygen = nil })
	if def.OxygenLimit != 0.195 || !strings.HasPrefix(def.OxygenSource, "default: US OSHA 29 CFR 1910.134") {
		t.Errorf("default level %g from %q, want 0.195 from the OSHA default", def.OxygenLimit, def.OxygenSource)
	}
	for _, f := range oxygenFindings(def) {
		if !strings.Contains(f.Message, "deficient below 19.5 %, default: US OSHA 29 CFR 1910.134") {
			t.Errorf("message %q does not say the level is a default and where it comes from", f.Message)
		}
	}
	// An invented site rule at 20.8 %: the 30 slm Ar release leaves
	// 20.948·(1 − 5.366e-4/(6·60/3600)) = 20.84 % O2, now below the level.
	own := analyzeWithSite(t, func(s *recipe.Site) {
		s.Oxygen = &recipe.Oxygen{DeficientBelow: recipe.MustParse("20.85 %", recipe.Fraction), Source: "site rule OX-1 (invented)"}
	})
	if math.Abs(own.OxygenLimit-0.2085) > 1e-12 || own.OxygenSource != "site file: site rule OX-1 (invented)" {
		t.Errorf("site level %g from %q, want 0.2085 from the site file", own.OxygenLimit, own.OxygenSource)
	}
	stop := false
	for _, f := range oxygenFindings(own) {
		if f.Severity == safety.Stop && strings.Contains(f.Message, "(deficient below 20.85 %, site file: site rule OX-1 (invented))") {
			stop = true
		}
	}
	if !stop {
		t.Errorf("got no oxygen stop against the site's 20.85 %% level:\n%s", listing(oxygenFindings(own)))
	}
}

// TestOxygenMessageNearThreshold: a release that leaves O2 just below the
// level must read below it. Hand calculation: 30 slm Ar = 0.02230752
// mol/s (1 sccm = 7.435839e-7 mol/s) = 5.36597e-4 m³/s at 20 °C and
// 101325 Pa; a 60 m³ room at 0.4646 air changes/h ventilates 7.74333e-3
// m³/s; C = 0.0692978 and O2 = 0.209476·(1 − C) = 19.4960 % (NASA Glenn
// air composition), below 19.5 %.
func TestOxygenMessageNearThreshold(t *testing.T) {
	rep := analyzeWithSite(t, func(s *recipe.Site) { s.Room.AirChanges = recipe.MustParse("0.4646 /h", recipe.Frequency) })
	var msg string
	for _, f := range oxygenFindings(rep) {
		if strings.Contains(f.Message, "Ar at 30 slm") {
			msg = f.Message
			if f.Severity != safety.Stop {
				t.Errorf("severity %s, want stop (19.496 %% < 19.5 %%)", f.Severity)
			}
		}
	}
	if !strings.Contains(msg, "leaves 19.496 % O2 (deficient below 19.5 %") {
		t.Errorf("message %q, want it to read 19.496 %% against 19.5 %%", msg)
	}
}

// TestLeakInAtFirstFuel: the checklist's tube O2 includes air leaking in
// at the leak check's pass figure. Hand calculation for the low-pressure
// template: 5 mTorr/min = 0.0111102 Pa/s into V = 3.80133e-4 m³ is
// 1.73274e-9 mol/s of air at 293.15 K; its O2 (20.9476 %, NASA Glenn air)
// in the first fuel step's 20 sccm H2 (1.487168e-5 mol/s, SEMI 0 °C
// reference) is 2.44038e-5 = 24.4 ppm. Tolerance 1e-4.
func TestLeakInAtFirstFuel(t *testing.T) {
	p, s, rep := analyzeFile(t, filepath.Join(root, "templates", "recipe-lowpressure.yaml"))
	near(t, "leak O2 at first fuel", rep.LeakOxygenAtFuel, 2.44038e-5, 1e-4)
	sh := safety.NewSheet(p, s, rep)
	found := false
	for _, it := range sh.Before {
		if strings.HasPrefix(it, "Tube O2 when fuel first enters") {
			found = strings.Contains(it, "plus 24 ppm from a leak at the pass figure 5 mTorr/min: about 24 ppm")
			if !found {
				t.Errorf("checklist line %q does not add the leak-in", it)
			}
		}
	}
	if !found {
		t.Error("checklist has no tube-O2 line with the leak-in")
	}
}
