package safety

import (
	"errors"
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"

	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/recipe/gas"
)

// ErrNoSite is returned by Analyze without a site: the room numbers need it.
var ErrNoSite = errors.New("the safety analysis needs a site file (room volume, ventilation, detectors)")

type analysis struct {
	p   *recipe.Plan
	s   *recipe.Site
	o   Options
	r   *Report
	lfl map[string]float64 // per gas symbol, compilation's LFL
}

func (a *analysis) add(sev Severity, sp *recipe.StepPlan, rule, action, format string, args ...any) *Finding {
	f := Finding{Severity: sev, Rule: rule, Action: action, Message: fmt.Sprintf(format, args...)}
	if sp != nil {
		f.Step, f.StepName = sp.Index+1, sp.Label
	}
	a.r.Findings = append(a.r.Findings, f)
	return &a.r.Findings[len(a.r.Findings)-1]
}

func (f *Finding) num(name string, v float64, unit string) *Finding {
	if !math.IsNaN(v) && !math.IsInf(v, 0) {
		f.Numbers = append(f.Numbers, Number{Name: name, Value: v, Unit: unit})
	}
	return f
}

// Analyze runs every safety rule over a derived plan in its site and
// returns the report, findings most serious first, then by step. The plan
// must come from recipe.Derive on loaded (validated) files. It returns
// ErrNoSite without a site, and an error wrapping recipe.ErrInvalid when
// the site's room has no volume or ventilation.
func Analyze(p *recipe.Plan, s *recipe.Site, o Options) (*Report, error) {
	if s == nil {
		return nil, ErrNoSite
	}
	if !(s.Room.Volume.SI > 0) || !(s.Room.AirChanges.SI > 0) {
		return nil, fmt.Errorf("site %q: room volume %q and air changes %q must both be greater than zero: %w",
			s.Name, s.Room.Volume.String(), s.Room.AirChanges.String(), recipe.ErrInvalid)
	}
	o = o.withSite(s).withDefaults()
	a := &analysis{p: p, s: s, o: o, lfl: map[string]float64{}}
	a.r = &Report{
		Recipe: p.Recipe.Name, Furnace: p.Furnace.Name, Site: s.Name, GasCode: s.GasCode,
		Compilation: o.Compilation.String(), TubeLitres: p.Furnace.TubeVolume() * 1000,
		VentilationM3H: s.Room.AirChanges.SI * s.Room.Volume.SI * 3600,
		OpenBelowC:     recipe.Celsius(recipe.VentTemperature), Options: o, Disclaimer: Disclaimer,
		OxygenLimit: o.OxygenLimit, OxygenSource: o.OxygenSource,
	}
	for i := range p.Steps {
		a.mixture(&p.Steps[i])
	}
	a.exhaust()
	a.sequence()
	a.room()
	a.questions()
	sort.SliceStable(a.r.Findings, func(i, j int) bool {
		fi, fj := a.r.Findings[i], a.r.Findings[j]
		if fi.Severity != fj.Severity {
			return fi.Severity > fj.Severity
		}
		return fi.Step < fj.Step
	})
	if a.r.Findings == nil {
		a.r.Findings = []Finding{}
	}
	a.r.Verdict = Verdict(a.r.Findings)
	return a.r, nil
}

// limits returns g's LFL, UFL and AIT from the chosen compilation.
func (a *analysis) limits(g gas.Gas) (lfl, ufl, ait float64) {
	l, u, t := g.Limits(a.o.Compilation)
	return l.V, u.V, t.V
}

// fuelMix returns the fuel fraction of a set of flows and the fuel-basis
// limits (Le Chatelier); zeros without fuel.
func (a *analysis) fuelMix(fs []recipe.FlowPlan) (phi, fuel, total, lfl, ufl float64) {
	var ys, ls, us []float64
	for _, f := range fs {
		total += f.Molar
		if f.Gas.Flammable && f.Molar > 0 {
			fuel += f.Molar
		}
	}
	if fuel == 0 || total == 0 {
		return 0, 0, total, 0, 0
	}
	for _, f := range fs {
		if f.Gas.Flammable && f.Molar > 0 {
			l, u, _ := a.limits(f.Gas)
			if l <= 0 || u <= 0 { // not listed by this compilation: fall back to the default
				l, u = f.Gas.LFL.V, f.Gas.UFL.V
			}
			ys, ls, us = append(ys, f.Molar/fuel), append(ls, l), append(us, u)
		}
	}
	ys[len(ys)-1] = 1 - sum(ys[:len(ys)-1]) // exact closure for the rule's check
	return fuel / total, fuel, total, LeChatelier(ys, ls), LeChatelier(ys, us)
}

func sum(xs []float64) float64 {
	t := 0.0
	for _, x := range xs {
		t += x
	}
	return t
}

func pct(x float64) string { return trim(fmt.Sprintf("%.3g", x*100)) + " %" }

// pctApart writes x and a threshold it is judged against as percentages:
// the threshold with the fewest digits (three to seven) that give it back,
// x with at least as many and more until the two read differently, so
// which side x is on shows: "19.496 %" against "19.5 %", never "19.5 %"
// against "19.5 %", nor a threshold rounded from 20.85 % to 20.9 %.
func pctApart(x, limit float64) (string, string) {
	d := 3
	for ; d < 7; d++ {
		if v, err := strconv.ParseFloat(fmt.Sprintf("%.*g", d, limit*100), 64); err == nil && math.Abs(v-limit*100) <= 1e-9*math.Abs(limit*100) {
			break
		}
	}
	b := fmt.Sprintf("%.*g", d, limit*100)
	a := fmt.Sprintf("%.*g", d, x*100)
	for ; a == b && x != limit && d < 9; d++ {
		a = fmt.Sprintf("%.*g", d+1, x*100)
	}
	return a + " %", b + " %"
}

func trim(s string) string { return strings.TrimSpace(s) }

func slm(molPerS float64) float64 { return molPerS / gas.MolPerSCCMPerSecond / 1000 }

func (a *analysis) mixture(sp *recipe.StepPlan) {
	st := StepSafety{Step: sp.Index + 1, Label: sp.Label, MaxTempC: recipe.Celsius(sp.MaxTemperature())}
	defer func() { a.r.Steps = append(a.r.Steps, st) }()
	phi, _, _, lfl, ufl := a.fuelMix(sp.Flows)
	if phi == 0 {
		return
	}
	st.FuelFraction, st.LFL, st.UFL = phi, lfl, ufl
	var fuels, hot []string
	oxid := false
	for _, f := range sp.Flows {
		if f.Molar <= 0 {
			continue
		}
		if f.Gas.Role == gas.Oxidiser {
			oxid = true
		}
		if !f.Gas.Flammable {
			continue
		}
		fuels = append(fuels, f.Gas.Symbol)
		if _, _, ait := a.limits(f.Gas); ait > 0 && sp.MaxTemperature() >= ait {
			hot = append(hot, f.Gas.Symbol)
		}
		if f.Gas.Decomposes {
			a.add(Warning, sp, "mixture.decomposes", "keep the gas diluted below its supplier's stated limit and follow the site's rules for this gas",
				"%s can decompose explosively without air: being above its UFL does not make it inert", f.Gas.Symbol)
		}
	}
	st.AboveAIT = hot
	names := strings.Join(fuels, "+")
	if oxid {
		a.add(Stop, sp, "mixture.oxidiser", "never feed an oxidiser together with a flammable gas; separate them by an inert purge",
			"the step feeds %s together with an oxidiser: the mixture in the tube itself can burn", names).
			num("fuel in feed", phi*100, "%")
		return
	}
	lo, hi, ok := AirMixRange(phi, lfl, ufl)
	st.AirMixLow, st.AirMixHigh = lo, hi
	if i := sp.Index - 1; i >= 0 && i < len(a.r.Steps) {
		if prev := a.r.Steps[i]; prev.FuelFraction == phi && prev.LFL == lfl && prev.UFL == ufl {
			return // same feed as the step before: said there
		}
	}
	if !ok {
		a.add(Note, sp, "mixture.below-lfl", "no action from this rule; leak check and purge still apply",
			"feed holds %s fuel (%s), below the mixture's LFL %s (Le Chatelier, %s): no mixture of it with air reaches the LFL",
			pct(phi), names, pct(lfl), a.r.Compilation).num("fuel in feed", phi*100, "%").num("LFL", lfl*100, "%")
		return
	}
	alone := "it cannot burn without air"
	if phi > ufl {
		alone = fmt.Sprintf("above the UFL %s it cannot burn without air", pct(ufl))
	}
	a.add(Note, sp, "mixture.flammable-with-air", "keep air out: leak-check and purge before, purge before opening; any leak of this feed into the room is flammable near the leak",
		"feed holds %s fuel (%s); flammable range of the fuel %s–%s (Le Chatelier, %s, 20 °C and 1 atm, inert counted as air); %s, but any mixture with leaked-in air holding %s–%s feed is flammable",
		pct(phi), names, pct(lfl), pct(ufl), a.r.Compilation, alone, pct(lo), pct(hi)).
		num("fuel in feed", phi*100, "%").num("LFL", lfl*100, "%").num("UFL", ufl*100, "%")
}
