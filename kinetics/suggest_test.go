package kinetics

import (
	"errors"
	"math"
	"strings"
	"testing"

	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/recipe/gas"
)

func mustTarget(t testing.TB, s string) Target {
	t.Helper()
	tg, err := ParseTarget(s)
	if err != nil {
		t.Fatal(err)
	}
	return tg
}

func TestParseTarget(t *testing.T) {
	for _, c := range []struct {
		in      string
		q       string
		atLeast bool
		v       float64
		wantErr string
	}{
		{"coverage>=0.99", MetricCoverage, true, 0.99, ""},
		{"coverage>=99%", MetricCoverage, true, 0.99, ""},
		{"coverage>=95 %", MetricCoverage, true, 0.95, ""},
		{"domain_size>=40um", MetricDomainSize, true, 40e-6, ""},
		{"domain_size >= 0.1 mm", MetricDomainSize, true, 1e-4, ""},
		{"nuclei_density<=100/mm2", MetricNucleiDensity, false, 1e8, ""}, // 1 /mm2 = 1e6 /m2 (SI prefix)
		{"nuclei_density<=100 mm-2", MetricNucleiDensity, false, 1e8, ""},
		{"Coverage>=0.5", MetricCoverage, true, 0.5, ""},
		{"coverage>=1", "", false, 0, "strictly between 0 and 1"},
		{"coverage>=100%", "", false, 0, "strictly between 0 and 1"},
		{"coverage=0.9", "", false, 0, "want METRIC>=VALUE"},
		{"domain_size>=40", "", false, 0, `"40" has no unit, want a length`},
		{"domain_size>=-1um", "", false, 0, "greater than zero"},
		{"nuclei_density<=1e308/um2", "", false, 0, "too large"},
		{"layers>=1", "", false, 0, `unknown metric "layers"`},
	} {
		tg, err := ParseTarget(c.in)
		if c.wantErr != "" {
			if err == nil || !errors.Is(err, ErrSuggest) || !strings.Contains(err.Error(), c.wantErr) {
				t.Errorf("%q: got %v, want error %q", c.in, err, c.wantErr)
			}
			continue
		}
		if err != nil || tg.Quantity != c.q || tg.AtLeast != c.atLeast || math.Abs(tg.Value-c.v) > 1e-12*c.v {
			t.Errorf("%q: got %+v %v, want %s %v %g", c.in, tg, err, c.q, c.atLeast, c.v)
		}
	}
}

// checkSuggested verifies the suggested recipe: Check finds no error, and a
// fresh prediction of it (Predict on the re-derived plan, not the search's
// prepared evaluation) meets every target.
func checkSuggested(t *testing.T, sug *Suggestion, plan *recipe.Plan, spec SuggestSpec) Result {
	t.Helper()
	if !sug.Met || sug.Recipe == nil || sug.Best == nil {
		t.Fatalf("no recipe met the targets; binding %q", sug.Binding)
	}
	p := recipe.Derive(sug.Recipe, plan.Furnace)
	for _, fd := range recipe.Check(p) {
		if fd.Severity == recipe.Error {
			t.Errorf("suggested recipe fails check: %s: %s", fd.Rule, fd.Message)
		}
	}
	res, err := Predict(p, spec.Params, spec.Options)
	if err != nil {
		t.Fatal(err)
	}
	for _, tg := range spec.Targets {
		got := map[string]float64{MetricCoverage: res.Coverage, MetricDomainSize: res.DomainSize, MetricNucleiDensity: res.NucleiDensity}[tg.Quantity]
		if tg.AtLeast && got < tg.Value || !tg.AtLeast && got > tg.Value {
			t.Errorf("target %s: suggested recipe predicts %g", tg.Text, got)
		}
	}
	return res
}

// The suggested recipe meets the targets, passes Check, and no point of a
// grid three times finer over the same temperature and CH4 ranges (with
// the time solved exactly at each point, which is stricter than any time
// grid) is cheaper while meeting the targets and passing Check. Tolerance
// 0.2 % of the cost (the written recipe's time is rounded up to 0.01 min).
func TestSuggestBeatsFineGrid(t *testing.T) {
	t.Parallel()
	plan := loadTemplate(t, "lowpressure")
	for _, c := range []struct {
		name     string
		targets  []string
		minimize string
	}{
		{"fastest full coverage", []string{"coverage>=0.99"}, MinimizeTime},
		{"large domains, least methane", []string{"coverage>=0.95", "domain_size>=15um"}, MinimizeMethane},
	} {
		t.Run(c.name, func(t *testing.T) {
			spec := SuggestSpec{Params: DefaultParams(), Minimize: c.minimize}
			for _, s := range c.targets {
				spec.Targets = append(spec.Targets, mustTarget(t, s))
			}
			sug, err := Suggest(plan, spec)
			if err != nil {
				t.Fatal(err)
			}
			checkSuggested(t, sug, plan, spec)
			if spec, err = spec.withDefaults(); err != nil {
				t.Fatal(err)
			}
			s := &searcher{spec: spec, base: plan.Recipe, f: plan.Furnace, grow: sug.Step, tlo: 10, thi: 4 * 3600, varyTime: true, v: vecOf(spec.Params)}
			spec.Minimize = c.minimize
			s.spec.Vary = []string{"temperature", "CH4"}
			for _, v := range s.spec.Vary {
				if err := s.addAxis(v, plan); err != nil {
					t.Fatal(err)
				}
			}
			const n = 37 // 3 × 12 intervals of the default 13-point grid
			cheaper := 0
			for i := range n {
				for j := range n {
					x := []float64{
						s.axes[0].lo + (s.axes[0].hi-s.axes[0].lo)*float64(i)/(n-1),
						math.Exp(math.Log(s.axes[1].lo) + (math.Log(s.axes[1].hi)-math.Log(s.axes[1].lo))*float64(j)/(n-1)),
					}
					pt := s.eval(x)
					if pt.ok && pt.cand.Cost < sug.Best.Cost*(1-2e-3) {
						cheaper++
						if cheaper < 4 {
							t.Errorf("grid point %.1f C, %.3g sccm costs %.5g, suggested %.5g", x[0]-273.15, x[1]/gas.MolPerSCCMPerSecond, pt.cand.Cost, sug.Best.Cost)
						}
					}
				}
			}
		})
	}
}

// With --confidence the lower bound of the interval meets the target, so
// the planned time is longer than at the best estimate.
func TestSuggestConfidence(t *testing.T) {
	t.Parallel()
	plan := loadTemplate(t, "lowpressure")
	res, err := Fit(observations(t, synthRuns(30, 7, fitTruth), fitStart()), fitStart(), FitSettings{})
	if err != nil {
		t.Fatal(err)
	}
	spec := SuggestSpec{Params: res.Params, Targets: []Target{mustTarget(t, "coverage>=0.99")}}
	plain, err := Suggest(plan, spec)
	if err != nil {
		t.Fatal(err)
	}
	spec.Confidence = 0.9
	sure, err := Suggest(plan, spec)
	if err != nil {
		t.Fatal(err)
	}
	if !sure.Met || !(sure.Best.Cost > plain.Best.Cost) {
		t.Fatalf("confidence 0.9: time %v, best-estimate time %v; want longer", sure.Best, plain.Best)
	}
	// The lower 5 % bound of coverage at the suggested recipe, computed
	// independently by PredictInterval, meets the target (to the
	// Monte Carlo error of 200 draws: 0.1 % of 1 − θ).
	u, err := PredictInterval(NewProfile(recipe.Derive(sure.Recipe, plan.Furnace)), res.Params, Options{}, IntervalSettings{Samples: 200})
	if err != nil {
		t.Fatal(err)
	}
	if u.Coverage.Lo < 0.99-1e-3*0.01 {
		t.Errorf("lower bound of coverage %.6f at the suggested recipe, want ≥ 0.99", u.Coverage.Lo)
	}
}

// An impossible target is not an error but a plain answer: no recipe,
// and the limits that bind.
func TestSuggestImpossible(t *testing.T) {
	plan := loadTemplate(t, "lowpressure")
	spec := SuggestSpec{Params: DefaultParams(), Targets: []Target{mustTarget(t, "domain_size>=5mm")}}
	sug, err := Suggest(plan, spec)
	if err != nil {
		t.Fatal(err)
	}
	if sug.Met || sug.Recipe != nil || sug.Closest == nil || len(sug.Binding) == 0 {
		t.Fatalf("got met=%v closest=%v binding=%q, want no recipe with binding limits", sug.Met, sug.Closest, sug.Binding)
	}
	if !strings.Contains(strings.Join(sug.Binding, "; "), "longest grow time") {
		t.Errorf("binding %q, want the time limit among them", sug.Binding)
	}
}

func TestSuggestBadInput(t *testing.T) {
	plan := loadTemplate(t, "lowpressure")
	cov := mustTarget(t, "coverage>=0.9")
	for _, c := range []struct {
		name string
		spec SuggestSpec
		want string
	}{
		{"no target", SuggestSpec{Params: DefaultParams()}, "at least one target"},
		{"unknown vary", SuggestSpec{Params: DefaultParams(), Targets: []Target{cov}, Vary: []string{"colour"}}, `unknown parameter "colour"`},
		{"no line", SuggestSpec{Params: DefaultParams(), Targets: []Target{cov}, Vary: []string{"He"}}, "no gas line"},
		{"range past limit", SuggestSpec{Params: DefaultParams(), Targets: []Target{cov}, Vary: []string{"temperature=900C:1150C"}}, "beyond the"},
		{"bad minimize", SuggestSpec{Params: DefaultParams(), Targets: []Target{cov}, Minimize: "cost"}, `cannot minimise "cost"`},
		{"confidence without covariance", SuggestSpec{Params: DefaultParams(), Targets: []Target{cov}, Confidence: 0.9}, "no covariance"},
	} {
		t.Run(c.name, func(t *testing.T) {
			_, err := Suggest(plan, c.spec)
			if err == nil || !strings.Contains(err.Error(), c.want) {
				t.Errorf("got %v, want an error containing %q", err, c.want)
			}
		})
	}
}

// One suggest over temperature, CH4 and time on the low-pressure
// template. Target under 1 s.
func BenchmarkSuggest(b *testing.B) {
	plan := loadTemplate(b, "lowpressure")
	tg, _ := ParseTarget("coverage>=0.99")
	for b.Loop() {
		if _, err := Suggest(plan, SuggestSpec{Params: DefaultParams(), Targets: []Target{tg}}); err != nil {
			b.Fatal(err)
		}
	}
}

// Varying the grow step's pressure set-point: the suggestion passes Check
// and meets the target off the shortest time searched, writes a pressure
// within the range, and no point of a pressure grid four times finer than
// the search's (time solved at each) is cheaper. Tolerance 0.2 % of the
// cost, as above.
func TestSuggestPressure(t *testing.T) {
	plan := loadTemplate(t, "lowpressure")
	const vary = "pressure=1Pa:300Pa"
	spec := SuggestSpec{Params: DefaultParams(), Targets: []Target{mustTarget(t, "coverage>=0.99")}, Vary: []string{vary, "duration"}}
	sug, err := Suggest(plan, spec)
	if err != nil {
		t.Fatal(err)
	}
	checkSuggested(t, sug, plan, spec)
	s := &searcher{spec: spec, base: plan.Recipe, f: plan.Furnace, grow: sug.Step, tlo: 10, thi: 4 * 3600, varyTime: true, v: vecOf(spec.Params)}
	if err := s.addAxis(vary, plan); err != nil {
		t.Fatal(err)
	}
	a := s.axes[0]
	if !(sug.Best.Duration > 2*s.tlo) {
		t.Fatalf("suggested grow time %g s sits on the shortest time searched", sug.Best.Duration)
	}
	var changed bool
	for _, c := range sug.Changes {
		if c.Field == ParamPressure {
			changed = true
			if !(c.SI >= a.lo && c.SI <= a.hi) || sug.Recipe.Steps[sug.Step].Pressure.Setpoint.SI != c.SI {
				t.Errorf("pressure change %+v outside %g..%g Pa or not in the recipe", c, a.lo, a.hi)
			}
		}
	}
	if !changed {
		t.Errorf("changes %+v do not set the pressure", sug.Changes)
	}
	const n = 49 // 4 × 12 intervals of the default 13-point grid
	for i := range n {
		x := []float64{math.Exp(math.Log(a.lo) + (math.Log(a.hi)-math.Log(a.lo))*float64(i)/(n-1))}
		if pt := s.eval(x); pt.ok && pt.cand.Cost < sug.Best.Cost*(1-2e-3) {
			t.Errorf("grid point %.4g Pa costs %.5g s, suggested %.4g Pa at %.5g s", x[0], pt.cand.Cost, sug.Best.Pressure, sug.Best.Cost)
		}
	}
	_, err = Suggest(plan, SuggestSpec{Params: DefaultParams(), Targets: spec.Targets, Vary: []string{"pressure=1Torr:2atm"}})
	if err == nil || !errors.Is(err, ErrSuggest) || !strings.Contains(err.Error(), "beyond the") {
		t.Errorf("pressure past one atmosphere or the gauge: got %v", err)
	}
}
